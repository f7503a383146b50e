"""Read a Python script or a Jupyter notebook into parsed units (one per script, one per cell)."""

from __future__ import annotations

import ast
import io
import json
import tokenize
from dataclasses import dataclass
from pathlib import Path

from featureaudit.errors import InputFileError

__all__ = ["Unit", "read_units"]


@dataclass(frozen=True)
class Unit:
    """One parsed piece of code: a whole script, or one notebook code cell (cell is 1-based)."""

    file: str
    cell: int | None
    tree: ast.Module
    lines: tuple[str, ...]

    def line(self, number: int) -> str:
        """The source text of ``number`` (1-based, within this unit), stripped."""
        return self.lines[number - 1].strip() if 0 < number <= len(self.lines) else ""


def _looks_magic(text: str) -> bool:
    head = text.strip()
    return head.startswith(("%", "!", "?")) or head.endswith("?")


def _complete(lines: list[str]) -> bool:
    """Do these lines close every bracket and string they open?"""
    text = "\n".join(lines) + "\n"
    try:
        for _ in tokenize.generate_tokens(io.StringIO(text).readline):
            pass
    except (tokenize.TokenError, IndentationError, SyntaxError):
        return False
    return not text.rstrip().endswith("\\")


def _is_magic(lines: list[str], index: int) -> bool:
    """A magic begins a statement (the lines before it are complete: a line starting with
    ``%`` inside a call is string formatting) and, for a trailing ``?``, ends it too (a line
    opening a string that ends in ``?`` is text)."""
    if not _looks_magic(lines[index]) or not _complete(lines[:index]):
        return False
    return not lines[index].rstrip().endswith("?") or _complete(lines[: index + 1])


def _strip_magics(source: str) -> str:
    """Blank IPython magics, shell escapes and help requests (a line starting with ``%``, ``!``
    or ``?``, or ending in ``?``) that begin a statement, so ``ast`` parses the cell while line
    numbers stay where they were; lines inside an open bracket or string are kept."""
    lines = source.splitlines()
    for i in range(len(lines)):
        if _is_magic(lines, i):
            lines[i] = ""
    return "\n".join(lines)


PYTHON_CELL_MAGICS = {"time", "timeit", "capture", "prun", "debug"}


def _foreign_cell(source: str) -> bool:
    """A cell run by another interpreter (``%%bash``, ``%%sql``, ``%%writefile x.py``): not
    Python the notebook runs, so not audited."""
    head = next((ln.strip() for ln in source.splitlines() if ln.strip()), "")
    if not head.startswith("%%"):
        return False
    name = head[2:].split(maxsplit=1)[0] if head[2:].strip() else ""
    return name not in PYTHON_CELL_MAGICS


def _cell_source(src: object) -> str:
    """A cell's source as text: a list of lines, one string, or anything else (a number)."""
    if isinstance(src, list):
        return "".join(str(x) for x in src)
    return "" if src is None else str(src)


def _parse(source: str, name: str) -> ast.Module:
    try:
        return ast.parse(source, filename=name)
    except RecursionError as exc:
        raise InputFileError(
            f"{name}: an expression is nested too deeply for Python's parser to read; split "
            "it into smaller statements or leave the file out of the paths to audit."
        ) from exc
    except SyntaxError as exc:
        raise InputFileError(
            f"{name}: line {exc.lineno}: Python syntax error ({exc.msg}); fix "
            "the file or leave it out of the paths to audit."
        ) from exc
    except ValueError as exc:  # null bytes
        raise InputFileError(
            f"{name}: not Python source ({exc}); pass .py scripts or .ipynb notebooks."
        ) from exc


def read_units(path: str | Path) -> list[Unit]:
    """Parse ``path`` into units: a ``.ipynb`` file gives its code cells in file order (the order
    they were run in may differ); anything else is read as one Python script."""
    p = Path(path)
    name = str(p)
    try:
        raw = p.read_bytes()
    except OSError as exc:
        raise InputFileError(
            f"{name}: cannot be read ({exc.strerror or exc}); pass an existing script or notebook."
        ) from exc
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise InputFileError(
            f"{name}: not UTF-8 text (a binary file?); pass .py scripts or .ipynb notebooks."
        ) from exc
    if p.suffix.lower() != ".ipynb":
        return [Unit(name, None, _parse(text, name), tuple(text.splitlines()))]
    try:
        doc = json.loads(text)
    except json.JSONDecodeError as exc:
        raise InputFileError(
            f"{name}: not a valid notebook (JSON error at line {exc.lineno}: "
            f"{exc.msg}); save it again from Jupyter."
        ) from exc
    cells = doc.get("cells") if isinstance(doc, dict) else None
    if not isinstance(cells, list):
        raise InputFileError(
            f"{name}: a notebook without a 'cells' list; save it again from Jupyter (nbformat 4)."
        )
    units = []
    for index, cell in enumerate(cells, start=1):
        if not isinstance(cell, dict) or cell.get("cell_type") != "code":
            continue
        source = _cell_source(cell.get("source", ""))
        if _foreign_cell(source):
            source = ""
        clean = source
        try:
            ast.parse(source)
        except (SyntaxError, ValueError, RecursionError):
            clean = _strip_magics(source)
        units.append(
            Unit(name, index, _parse(clean, f"{name} cell {index}"), tuple(source.splitlines()))
        )
    return units
