"""Precision and recall of `featureaudit code`, per kind and per level, on two corpora.

1. tests/code_cases: each case states its expected kinds before the code (`# expect: KIND` or
   `clean` on the first line of a script; `metadata.featureaudit_expect` of a notebook).
2. benchmarks/code_corpus: 203 scripts and notebooks of ordinary ML code whose labels
   (labels.csv: file, half, family, kind, level floor, line) were written with the files,
   before the tool ran (benchmarks/write_code_corpus.py). Halves are fixed by pattern family:
   rules are tuned on `tune`, figures quoted on `check`.

At level L a label counts when its floor is L or above and is found when a finding of its kind
at level L or above sits on its line (one line of slack: a statement's first line); a finding
at L or above is correct when it sits on a labelled line of its kind.
"""

from __future__ import annotations

import csv
import json
import sys
from collections.abc import Iterable
from pathlib import Path

from featureaudit.code.audit import audit_file
from featureaudit.code.rules import KINDS
from featureaudit.vocab.levels import Level

CASES = Path(__file__).resolve().parents[1] / "tests" / "code_cases"
CORPUS = Path(__file__).resolve().parent / "code_corpus"
LEVELS = (Level.LOW, Level.MEDIUM, Level.HIGH)


def expected(path: Path) -> set[str]:
    """The kinds a case declares (empty for a clean twin)."""
    if path.suffix == ".ipynb":
        text = json.loads(path.read_text())["metadata"]["featureaudit_expect"]
    else:
        text = path.read_text().splitlines()[0].removeprefix("# expect:")
    kinds = {k.strip() for k in text.split(",")}
    return set() if kinds == {"clean"} else kinds


def score(cases: Path = CASES) -> dict[str, object]:
    """Counts over the corpus: tp, fp, fn, findings on clean twins, and the misses by file."""
    tp = fp = fn = clean_hits = 0
    misses: list[str] = []
    for path in sorted(p for p in cases.iterdir() if p.suffix in (".py", ".ipynb")):
        want = expected(path)
        got = {f.kind for f in audit_file(path)[0]}
        tp += len(want & got)
        fp += len(got - want)
        fn += len(want - got)
        clean_hits += 0 if want else len(got)
        if want != got:
            misses.append(f"{path.name}: expected {sorted(want)}, found {sorted(got)}")
    return {
        "cases": len(list(cases.glob("*.p*"))) + len(list(cases.glob("*.ipynb"))),
        "tp": tp,
        "fp": fp,
        "fn": fn,
        "clean_hits": clean_hits,
        "precision": tp / (tp + fp) if tp + fp else 1.0,
        "recall": tp / (tp + fn) if tp + fn else 1.0,
        "misses": misses,
    }


Spot = tuple[str, str, int, int]  # file, kind, cell (0 for scripts), line


def labels(corpus: Path = CORPUS) -> list[dict[str, str]]:
    """The rows of labels.csv."""
    with open(corpus / "labels.csv", newline="") as fh:
        return list(csv.DictReader(fh))


def _spot(file: str, kind: str, where: str) -> Spot:
    cell, _, line = where.rpartition(":")
    return (file, kind, int(cell or 0), int(line))


def _near(a: Spot, b: Spot) -> bool:
    return a[:3] == b[:3] and abs(a[3] - b[3]) <= 1


def findings_of(corpus: Path = CORPUS) -> tuple[dict[str, list[tuple[Spot, Level]]], list[str]]:
    """Every corpus file's findings as (spot, level), and the files the tool could not read."""
    out: dict[str, list[tuple[Spot, Level]]] = {}
    skipped: list[str] = []
    for path in sorted(p for p in corpus.iterdir() if p.suffix in (".py", ".ipynb")):
        try:
            found = audit_file(path)[0]
        except Exception as exc:  # noqa: BLE001 - a skipped file is a figure of this benchmark
            skipped.append(f"{path.name}: {exc}")
            found = []
        out[path.name] = [((path.name, f.kind, f.cell or 0, f.line), f.level) for f in found]
    return out, skipped


Counts = tuple[int, int, int, int]  # labels found, findings right, findings, labels


def _labelled(rows: list[dict[str, str]], half: str) -> list[tuple[Spot, Level]]:
    return [
        (_spot(r["file"], r["kind"], r["line"]), Level.parse(r["level"]))
        for r in rows
        if r["half"] == half and r["kind"] != "clean"
    ]


def _counts(
    want: list[tuple[Spot, Level]], got: list[tuple[Spot, Level]], kind: str, level: Level
) -> Counts:
    """Counts for one kind ("all" for every kind) at one level (see the module docstring)."""
    mine = [(s, lv) for s, lv in want if kind in ("all", s[1])]
    w = [s for s, floor in mine if floor >= level]
    g = [s for s, lv in got if lv >= level and kind in ("all", s[1])]
    hit = sum(1 for s in w if any(_near(s, x) for x in g))
    right = sum(1 for x in g if any(_near(s, x) for s, _ in mine))
    return hit, right, len(g), len(w)


def table(
    rows: list[dict[str, str]], found: dict[str, list[tuple[Spot, Level]]], half: str
) -> dict[tuple[str, Level], Counts]:
    """(kind or "all", level) -> (labels found, findings right, findings, labels) at that
    level, over the files of one half."""
    files = sorted({r["file"] for r in rows if r["half"] == half})
    want = _labelled(rows, half)
    got = [f for name in files for f in found.get(name, [])]
    return {
        (kind, level): _counts(want, got, kind, level)
        for kind in [*KINDS, "all"]
        for level in LEVELS
    }


def _ratio(a: int, b: int) -> str:
    return f"{a / b:.2f}" if b else "  - "


def report(rows: Iterable[dict[str, str]] | None = None) -> list[str]:
    """The printed table: per half, kind and level, precision and recall with their counts."""
    rows = list(rows if rows is not None else labels())
    found, skipped = findings_of()
    lines = [f"corpus {CORPUS.name}: {len({r['file'] for r in rows})} files"]
    lines += [f"  skipped {s}" for s in skipped]
    for half in ("tune", "check"):
        t = table(rows, found, half)
        lines.append(f"{half}: kind                      level    precision        recall")
        for (kind, level), (hit, right, n_got, n_want) in t.items():
            lines.append(
                f"  {kind:26s} {level.label:7s} {_ratio(right, n_got)} ({right:3d}/{n_got:3d})"
                f"  {_ratio(hit, n_want)} ({hit:3d}/{n_want:3d})"
            )
    return lines


def _file_misses(name: str, want: list[Spot], got: list[tuple[Spot, Level]]) -> list[str]:
    out = []
    for s in want:
        if not any(_near(s, x) and lv >= Level.MEDIUM for x, lv in got):
            lev = [lv.label for x, lv in got if _near(s, x)]
            out.append(f"{name}: missed {s[1]} at {s[2]}:{s[3]} {lev}")
    for x, lv in got:
        if lv >= Level.MEDIUM and not any(_near(s, x) for s in want):
            out.append(f"{name}: false {x[1]} {lv.label} at {x[2]}:{x[3]}")
    return out


def misses(half: str | None = None) -> list[str]:
    """Labels not found and findings not labelled (at medium or above), for tuning by hand."""
    rows = labels()
    found, _ = findings_of()
    out = []
    for name in sorted({r["file"] for r in rows if half in (None, r["half"])}):
        mine = [r for r in rows if r["file"] == name and r["kind"] != "clean"]
        want = [_spot(name, r["kind"], r["line"]) for r in mine]
        out += _file_misses(name, want, found.get(name, []))
    return out


if __name__ == "__main__":
    s = score()
    for m in s["misses"]:  # type: ignore[union-attr]
        print("  " + m)
    print(
        f"tests/code_cases: tp {s['tp']} fp {s['fp']} fn {s['fn']}; findings on clean twins "
        f"{s['clean_hits']}; precision {s['precision']:.3f} recall {s['recall']:.3f}"
    )
    if "--misses" in sys.argv:
        print("\n".join(misses(None if len(sys.argv) < 3 else sys.argv[2])))
    print("\n".join(report()))
    sys.exit(0)
