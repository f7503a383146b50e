"""Precision and recall of `featureaudit code` on the hand-written corpus in tests/code_cases.

Each case states its expected kinds before the code (`# expect: KIND[,KIND]` or `clean` on the
first line of a script; `metadata.featureaudit_expect` of a notebook). A true positive is an
expected kind found; a false positive is a kind found but not expected.
"""

from __future__ import annotations

import json
import sys
from pathlib import Path

from featureaudit.code.audit import audit_file

CASES = Path(__file__).resolve().parents[1] / "tests" / "code_cases"


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


if __name__ == "__main__":
    s = score()
    for m in s["misses"]:  # type: ignore[union-attr]
        print("  " + m)
    print(
        f"tp {s['tp']} fp {s['fp']} fn {s['fn']}; findings on clean twins {s['clean_hits']}; "
        f"precision {s['precision']:.3f} recall {s['recall']:.3f}"
    )
    sys.exit(0)
