"""Run history (``--history DIR``): keep every run's findings, read them back, show trends.

Each run is stored as ``<created>-<content hash>.json`` and never overwritten, so a folder
kept by a scheduler or a CI cache is a complete record of how each column's evidence moved.
"""

from __future__ import annotations

import contextlib
import hashlib
import html
import os
import re
import tempfile
from dataclasses import dataclass
from pathlib import Path

from featureaudit.errors import InputFileError
from featureaudit.findings import Findings, load_findings
from featureaudit.levels import Level

__all__ = [
    "Run",
    "check_folder",
    "load_runs",
    "store_run",
    "run_name",
    "marks",
    "series",
    "trend_svg",
    "history_lines",
]

_NAME = re.compile(r"^\d{8}T\d{6}Z-[0-9a-f]{12}\.json$")


@dataclass(frozen=True)
class Run:
    """One stored run: its file name, creation time and findings."""

    name: str
    created: str
    findings: Findings


def check_folder(folder: str | Path, *, flag: str = "--history") -> Path:
    """The history folder, created when missing; a path that is a file is an error."""
    p = Path(folder)
    if p.exists() and not p.is_dir():
        raise InputFileError(f"{flag} {str(p)!r} is a file; pass a folder for the run history.")
    try:
        p.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise InputFileError(
            f"cannot create the {flag} folder {str(p)!r}: {exc.strerror}; pass a folder you "
            "can write to."
        ) from exc
    try:  # a folder this run cannot write to is said now, before any work
        fd, probe = tempfile.mkstemp(prefix=".probe.", suffix=".tmp", dir=p)
        os.close(fd)
        os.unlink(probe)
    except OSError as exc:
        raise InputFileError(
            f"cannot write into the {flag} folder {str(p)!r}: {exc.strerror or exc}; pass a "
            "folder you can write to."
        ) from exc
    return p


def run_name(findings: Findings) -> str:
    """``20261202T150000Z-<first 12 hex digits of the SHA-256 of the JSON>.json``."""
    digest = hashlib.sha256(findings.to_json().encode("utf-8")).hexdigest()[:12]
    stamp = re.sub(r"[-:]", "", str(findings.document.get("created", "")))[:16]
    if not re.fullmatch(r"\d{8}T\d{6}Z", stamp):
        stamp = "00000000T000000Z"
    return f"{stamp}-{digest}.json"


def store_run(folder: str | Path, findings: Findings) -> Path:
    """Add this run to the folder; an existing file is never replaced (same name = same
    content, as the name carries the content hash)."""
    out = Path(folder)
    final = out / run_name(findings)
    if final.exists():
        return final
    try:
        fd, tmp = tempfile.mkstemp(prefix=".run.", suffix=".tmp", dir=out)
    except OSError as exc:
        raise _not_stored(out, exc) from exc
    try:
        with os.fdopen(fd, "w", encoding="utf-8", newline="\n") as fh:
            fh.write(findings.to_json())
        os.chmod(tmp, 0o644)
        with contextlib.suppress(FileExistsError):  # fails rather than overwrite
            os.link(tmp, final)
    except OSError as exc:
        raise _not_stored(out, exc) from exc
    finally:
        Path(tmp).unlink(missing_ok=True)
    return final


def _not_stored(folder: Path, exc: OSError) -> InputFileError:
    return InputFileError(
        f"cannot store this run in the --history folder {str(folder)!r}: "
        f"{exc.strerror or exc}; the report itself is written. Pass a folder you can write to."
    )


def load_runs(folder: str | Path) -> list[Run]:
    """Every stored run, oldest first (by creation time, then when it was stored); other
    files are ignored."""
    p = Path(folder)
    if not p.is_dir():
        raise InputFileError(
            f"history folder {str(p)!r} does not exist; pass the folder given to "
            "`featureaudit scan --history`."
        )
    found = []
    for path in p.iterdir():
        if path.name.startswith(".") or path.suffix.lower() != ".json":
            continue  # this tool's own temporary files, and notes kept beside the runs
        if _NAME.match(path.name):
            findings = _stored_run(p, path)
            created = str(findings.document.get("created", ""))
            # runs within one second share a stamp: the order they were stored breaks the tie
            found.append((created, path.stat().st_mtime_ns, Run(path.name, created, findings)))
        else:
            raise InputFileError(
                f"history folder {str(p)!r} holds {path.name!r}, which is not a run featureaudit "
                "stored (runs are named like 20261201T120000Z-0123456789ab.json); move it out "
                "of the folder, or pass --history with another folder."
            )
    found.sort(key=lambda t: (t[0], t[1], t[2].name))
    return [run for _, _, run in found]


def _stored_run(folder: Path, path: Path) -> Findings:
    """One stored run; a corrupt or foreign file is an error that names it."""
    try:
        return load_findings(path)
    except InputFileError as exc:
        reason = str(exc).split(": ", 1)[-1] if ": " in str(exc) else str(exc)
        raise InputFileError(
            f"history folder {str(folder)!r} holds {path.name!r}, which is not a readable run "
            f"({reason.split(';')[0]}); move it out of the folder, or pass --history with "
            "another folder."
        ) from exc


def _levels(findings: Findings) -> dict[str, tuple[str, float]]:
    out = {
        c["column"]: (str(c.get("level", "none")), float(c.get("score") or 0.0))
        for c in findings.columns
    }
    for f in findings.dataset_findings:
        out[f"{f.get('kind')} (split)"] = (str(f.get("level", "none")), 0.0)
    return out


def marks(previous: Findings | None, current: Findings) -> dict[str, str]:
    """``new`` or ``raised`` for each column or split finding (``"<kind> (split)"``) whose
    level went up since the previous run; nothing when there is no previous run."""
    if previous is None:
        return {}
    before, now = _levels(previous), _levels(current)
    out = {}
    for name, (level, _) in now.items():
        if Level.parse(level) == Level.NONE:
            continue
        was = before.get(name)
        if was is None or Level.parse(was[0]) == Level.NONE:
            out[name] = "new"
        elif Level.parse(level) > Level.parse(was[0]):
            out[name] = "raised"
    return out


def series(runs: list[Findings]) -> dict[str, list[tuple[str, float] | None]]:
    """Per column, its (level, score) in each run, ``None`` where the run lacks it."""
    tables = [_levels(r) for r in runs]
    names: list[str] = []
    for t in tables:
        names.extend(n for n in t if n not in names and not n.endswith(" (split)"))
    return {n: [t.get(n) for t in tables] for n in names}


def trend_svg(points: list[tuple[str, float] | None], width: int = 120, height: int = 28) -> str:
    """A small inline line chart of a column's score over the runs (0 at the bottom, 1 at
    the top); a gap where a run lacks the column; the last point is drawn larger."""
    known = [(i, p[1]) for i, p in enumerate(points) if p is not None]
    if len(points) < 2 or not known:
        return ""
    step = (width - 8) / (len(points) - 1)

    def xy(i: int, score: float) -> tuple[float, float]:
        return 4 + i * step, 3 + (1 - min(max(score, 0.0), 1.0)) * (height - 6)

    segments: list[list[tuple[float, float]]] = []
    current: list[tuple[float, float]] = []
    for i, p in enumerate(points):
        if p is None:
            if current:
                segments.append(current)
            current = []
        else:
            current.append(xy(i, p[1]))
    if current:
        segments.append(current)
    lines = "".join(
        '<polyline fill="none" stroke="currentColor" stroke-width="1.5" points="'
        + " ".join(f"{x:.1f},{y:.1f}" for x, y in seg)
        + '"/>'
        for seg in segments
    )
    dots = "".join(
        f'<circle cx="{xy(i, s)[0]:.1f}" cy="{xy(i, s)[1]:.1f}" r="{_radius(i, len(points))}"/>'
        for i, s in known
    )
    label = ", ".join("absent" if p is None else f"{p[0]} {p[1]:.2f}" for p in points)
    gy = xy(0, 0.6)[1]  # the bottom of the high band
    guide = f'<line x1="0" x2="{width}" y1="{gy:.1f}" y2="{gy:.1f}" class="guide"/>'
    return (
        f'<svg class="trend" width="{width}" height="{height}" viewBox="0 0 {width} {height}" '
        f'role="img" aria-label="score over {len(points)} runs: {html.escape(label)}">'
        f"<title>score over {len(points)} runs, oldest first: {html.escape(label)}</title>"
        f"{guide}{lines}{dots}</svg>"
    )


def _radius(i: int, n: int) -> float:
    return 2.6 if i == n - 1 else 1.6


def _undecided(runs: list[Run]) -> set[tuple[int, str]]:
    """(run index, column) where the column is at none because the probe that raised it in
    the run before could not judge it: shown as "cannot tell", not as a level."""
    from featureaudit.findings import cannot_tell_probes, raised_by

    out = set()
    for i in range(1, len(runs)):
        before = {c["column"]: c for c in runs[i - 1].findings.columns}
        for c in runs[i].findings.columns:
            was = before.get(c["column"])
            if was and c.get("level", "none") == "none" and cannot_tell_probes(c) & raised_by(was):
                out.add((i, c["column"]))
    return out


def history_lines(runs: list[Run], column: str | None = None) -> list[str]:
    """The `featureaudit history` table: each run's table and size, then per column, level
    and score in each run, oldest first ("cannot tell" where a check could not judge it),
    and the runs (by number) that raised it."""
    if not runs:
        return ["no runs stored yet"]
    out = ["runs, oldest first (run, created, table, rows, stored as):"]
    for i, r in enumerate(runs, start=1):
        d = r.findings.document.get("dataset") or {}
        out.append(
            f"  {i:>3}  {r.created}  {d.get('source', '?')}  {d.get('rows', '?')} rows  {r.name}"
        )
    undecided = _undecided(runs)
    table = series([r.findings for r in runs])
    splits: dict[str, list[tuple[str, float] | None]] = {}
    for i, r in enumerate(runs):
        for name, value in _levels(r.findings).items():
            if name.endswith(" (split)"):
                splits.setdefault(name, [None] * len(runs))[i] = value
    rows = {**table, **splits}
    if column is not None:
        rows = {column: rows[column]}
    width = max(len(n) for n in rows) if rows else 6
    out.append("")
    out.append(
        f"{'column':<{width}}  "
        + "  ".join(f"run {i:<9}" for i in range(1, len(runs) + 1))
        + "  raised in"
    )
    for name, points in rows.items():
        cells = []
        raised = []
        for i, p in enumerate(points):
            cells.append(
                f"{'-':<13}"
                if p is None
                else f"{'cannot tell':<13}"
                if (i, name) in undecided
                else (f"{p[0]:<13}" if name.endswith(" (split)") else f"{p[0]:<8} {p[1]:.2f}")
            )
            prev = points[i - 1] if i else None
            if i and p is not None and Level.parse(p[0]) > Level.parse(prev[0] if prev else "none"):
                raised.append(str(i + 1))
        out.append(f"{name:<{width}}  " + "  ".join(cells) + "  " + (", ".join(raised) or "-"))
    return out
