"""Read a Python script or a Jupyter notebook into parsed units (one per script, one per cell)."""

from __future__ import annotations

import ast
import json
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


def _strip_magics(source: str) -> str:
    """Blank IPython magics and shell escapes (``%``, ``!``, ``?``) so ``ast`` parses the cell
    while line numbers stay where they were."""
    out = []
    for text in source.splitlines():
        head = text.lstrip()
        out.append("" if head.startswith(("%", "!", "?")) or head.endswith("?") else text)
    return "\n".join(out)


def _parse(source: str, name: str) -> ast.Module:
    try:
        return ast.parse(source, filename=name)
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
        src = cell.get("source", "")
        source = "".join(src) if isinstance(src, list) else str(src)
        clean = _strip_magics(source)
        units.append(
            Unit(name, index, _parse(clean, f"{name} cell {index}"), tuple(source.splitlines()))
        )
    return units
