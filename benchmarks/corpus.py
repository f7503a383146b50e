"""Development corpus bench: featureaudit on real tables from many packages, leave-source-out.

Runs ``featureaudit.audit`` on every cached case of the corpus (corpus_build.py) and prints,
in-source (every package pooled) and leave-source-out (packages assigned to five folds by a
hash of their name; each fold measured with what was fitted on the other four):

- recall at ``high`` (level at least the case's stated minimum, with the expected kind) per
  failure class of issue 24, per kind and per case family;
- honest columns at ``high`` per 1,000 (raw, and without columns reviewed as real leaks in
  benchmarks/corpus_review.csv);
- honest cases (clean splits) with a dataset finding at ``high`` per 200;
- ranking: the share of planted cases whose every planted column scores above every honest one.

Thresholds are the probes' constants, so the held-out figures equal the in-source ones
unless a calibration is given: ``--calibrate quantile`` fits, on the training folds' honest
columns and clean cases, the value of each probe statistic above which ``high`` may stand
(at most 1 honest column in 1,000, 1 clean case in 200), and applies it to the held-out fold.
Results are cached per case, keyed by a hash of featureaudit's code and of the case's files,
so reruns are cheap.

    python benchmarks/corpus.py [--fast] [--only PACKAGE] [--workers 1] [--calibrate quantile]
"""

from __future__ import annotations

import argparse
import csv
import hashlib
import json
import sys
import time
import traceback
import warnings
from collections import defaultdict
from collections.abc import Callable, Iterable
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))

import corpus_build as cb  # noqa: E402
import corpus_sources as cs  # noqa: E402

import featureaudit as fa  # noqa: E402
from featureaudit.settings import Settings  # noqa: E402

ROOT = Path(__file__).resolve().parent.parent
REVIEW = Path(__file__).resolve().parent / "corpus_review.csv"
RANK = {"none": 0, "low": 1, "medium": 2, "high": 3, "critical": 4}
FOLDS = 5
Record = dict  # a case's stored result


def code_version() -> str:
    """Hash of featureaudit's and the probes' sources: the results cache's key."""
    digest = hashlib.sha256(fa.__version__.encode())
    for folder in ("featureaudit", "probes", "reports"):
        for path in sorted((ROOT / folder).rglob("*")):
            if path.suffix in (".py", ".html", ".md", ".j2") and "__pycache__" not in path.parts:
                digest.update(path.relative_to(ROOT).as_posix().encode())
                digest.update(path.read_bytes())
    return digest.hexdigest()[:12]


def fold_of(package: str) -> int:
    """The package's fold: a hash of its name, so a package never spans two folds."""
    return cs.stable_hash(f"fold/{package}") % FOLDS


def _evidence(items: Iterable[dict]) -> list[list]:
    return [
        [e["probe"], e["kind"], e["statistic"], e["value"], e["threshold"], e["level"]]
        for e in items
    ]


def audit_case(folder: Path) -> Record:
    """Audit one cached case; the stored result keeps levels, kinds, scores and evidence."""
    case, frame, args = cb.load_case(folder)
    start = time.perf_counter()
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            result = fa.audit(frame, seed=0, settings=Settings(n_jobs=1), **args)
    except Exception as exc:  # recorded and counted: a case the tool cannot run is a finding
        line = traceback.format_exception_only(exc)[-1].strip()
        return {"id": case["id"], "error": line[:300], "seconds": time.perf_counter() - start}
    doc = result.document
    columns = {
        c["column"]: [c["level"], c["kinds"], c["score"], _evidence(c["evidence"]), c["summary"]]
        for c in doc["columns"]
    }
    return {
        "id": case["id"],
        "columns": columns,
        "dataset": [
            [*e, f.get("summary", "")] for f in doc["dataset_findings"] for e in _evidence([f])
        ],
        "seconds": time.perf_counter() - start,
    }


def case_digest(folder: Path) -> str:
    """Hash of a cached case's files: a changed case is audited again."""
    digest = hashlib.sha256()
    for name in ("case.json", "frame.parquet", "test.parquet", "dictionary.csv"):
        if (folder / name).exists():
            digest.update(name.encode())
            digest.update((folder / name).read_bytes())
    return digest.hexdigest()[:12]


def _cached(folder: Path, store: Path) -> Record:
    path = store / f"{folder.name}-{case_digest(folder)}.json"
    if path.exists():
        return json.loads(path.read_text())
    record = audit_case(folder)
    path.write_text(json.dumps(record, default=float))
    return record


def run_all(folders: list[Path], store: Path, workers: int) -> list[Record]:
    """Audit every case (cached results reused), in ``workers`` processes."""
    store.mkdir(parents=True, exist_ok=True)
    if workers <= 1:
        out = []
        for i, f in enumerate(folders, 1):
            out.append(_cached(f, store))
            if i % 50 == 0:
                print(f"  {i}/{len(folders)} cases", file=sys.stderr, flush=True)
        return out
    from concurrent.futures import ProcessPoolExecutor

    with ProcessPoolExecutor(workers) as pool:
        return list(pool.map(_cached, folders, [store] * len(folders)))


# calibration -----------------------------------------------------------------------------
Calibration = Callable[[list[tuple[dict, Record]]], Callable[[Record], Record]]


def identity(train: list[tuple[dict, Record]]) -> Callable[[Record], Record]:
    """The probes' own constants: nothing is fitted, nothing changes."""
    return lambda record: record


def _sign(value: float, threshold: float | None) -> float:
    """+1 when a larger value is more suspect (value at or above its threshold), else -1."""
    return 1.0 if threshold is None or value >= threshold else -1.0


def _cut(values: list[float], budget: int) -> float:
    """The largest signed value that must lose ``high`` so at most ``budget`` stay above."""
    ordered = sorted(values, reverse=True)
    return ordered[budget] if len(ordered) > budget else -np.inf


def _high_evidence(evidence: list[list]) -> Iterable[tuple[tuple, float]]:
    for probe, kind, stat, value, threshold, level in evidence[:]:
        if RANK.get(level, 0) >= RANK["high"] and isinstance(value, int | float):
            yield (probe, kind, stat), _sign(value, threshold) * value


def quantile(train: list[tuple[dict, Record]]) -> Callable[[Record], Record]:
    """Per probe statistic, the signed value at or below which ``high`` is withdrawn, chosen
    on the training folds so that at most 1 honest column in 1,000 and 1 honest case in 200
    keep a finding at ``high`` by that statistic."""
    col_values: dict[tuple, list[float]] = defaultdict(list)
    split_values: dict[tuple, list[float]] = defaultdict(list)
    n_cols = n_cases = 0
    for case, rec in train:
        if "error" in rec:
            continue
        for col in case["honest"]:
            if col in rec["columns"]:
                n_cols += 1
                for key, v in _high_evidence(rec["columns"][col][3]):
                    col_values[key].append(v)
        if case["status"] == "honest":
            n_cases += 1
            for key, v in _high_evidence([d[:6] for d in rec["dataset"]]):
                split_values[key].append(v)
    cuts = {k: _cut(v, n_cols // 1000) for k, v in col_values.items()}
    cuts |= {("split", *k): _cut(v, n_cases // 200) for k, v in split_values.items()}
    return lambda record: _apply(record, cuts)


def _demote(evidence: list[list], cuts: dict, prefix: tuple = ()) -> tuple[list[list], str]:
    out, top = [], "none"
    for e in evidence:
        probe, kind, stat, value, threshold, level = e[:6]
        key = (*prefix, probe, kind, stat)
        judged = RANK.get(level, 0) >= RANK["high"] and isinstance(value, int | float)
        if judged and key in cuts and _sign(value, threshold) * value <= cuts[key]:
            level = "medium"
        out.append([probe, kind, stat, value, threshold, level, *e[6:]])
        top = level if RANK.get(level, 0) > RANK[top] else top
    return out, top


def _apply(record: Record, cuts: dict) -> Record:
    """The record with evidence below its cut lowered to ``medium``; a column's level is
    capped by its strongest remaining evidence."""
    if "error" in record:
        return record
    columns = {}
    for name, (level, kinds, score, evidence, summary) in record["columns"].items():
        new, top = _demote(evidence, cuts)
        if evidence and RANK[top] < RANK[level]:
            level = top
        columns[name] = [level, kinds, score, new, summary]
    dataset, _ = _demote(record["dataset"], cuts, ("split",))
    return {**record, "columns": columns, "dataset": dataset}


CALIBRATIONS: dict[str, Calibration] = {"none": identity, "quantile": quantile}


# figures -----------------------------------------------------------------------------------
def _at(level: str, minimum: str) -> bool:
    return RANK.get(level, 0) >= RANK[minimum]


def _split_level(rec: Record, kind: str) -> str:
    levels = [d[5] for d in rec["dataset"] if d[1] == kind]
    return max(levels, key=lambda v: RANK.get(v, 0), default="none")


def planted_hits(case: dict, rec: Record) -> list[tuple[str, bool]]:
    """(label, found) for every planted column and planted split finding of a case."""
    out = []
    for col, kind in case["planted"].items():
        level, kinds = rec["columns"].get(col, ["none", []])[:2]
        out.append((col, _at(level, case["min_level"]) and kind in kinds))
    if case["split_kind"]:
        out.append(("*split*", _at(_split_level(rec, case["split_kind"]), case["min_level"])))
    return out


def ranked(case: dict, rec: Record) -> bool | None:
    """Every planted column scores above every honest one (None: no planted column)."""
    planted = [rec["columns"][c][2] for c in case["planted"] if c in rec["columns"]]
    if not planted:
        return None
    honest = [rec["columns"][c][2] for c in case["honest"] if c in rec["columns"]]
    return min(planted) > max(honest, default=-1.0)


def reviewed_leaks() -> set[tuple[str, str, str]]:
    """(package, table, column) reviewed as real leaks in the review file."""
    if not REVIEW.exists():
        return set()
    with REVIEW.open() as handle:
        rows = list(csv.DictReader(handle))
    return {(r["package"], r["table"], r["column"]) for r in rows if r["verdict"] == "real_leak"}


def figures(pairs: list[tuple[dict, Record]], leaks: set) -> dict:
    """The bench's figures over (case, result) pairs."""
    f: dict = defaultdict(lambda: [0, 0])
    for case, rec in pairs:
        if "error" in rec:
            f["errors"][1] += 1
            continue
        for _label, ok in planted_hits(case, rec):
            grade = "high" if case["min_level"] == "high" else "medium"
            for key in (
                f"{grade}|all",
                f"{grade}|kind {case['kind']}",
                f"{grade}|class {case['klass']}",
                f"{grade}|case {case['spec']}",
            ):
                f[key][0] += ok
                f[key][1] += 1
        r = ranked(case, rec)
        if r is not None:
            f["ranking"][0] += r
            f["ranking"][1] += 1
        for col in case["honest"]:
            if col in rec["columns"]:
                high = _at(rec["columns"][col][0], "high")
                f["honest_cols"][0] += high
                f["honest_cols"][1] += 1
                leak = (case["package"], case["table"], col) in leaks
                f["honest_cols_reviewed"][0] += high and not leak
                f["honest_cols_reviewed"][1] += not leak
        if case["status"] == "honest":
            f["clean_cases"][0] += any(_at(d[5], "high") for d in rec["dataset"])
            f["clean_cases"][1] += 1
    return dict(f)


def _frac(pair: list[int]) -> str:
    a, b = pair
    return f"{a}/{b} = {a / b:.3f}" if b else "-"


def _per(pair: list[int], scale: int) -> str:
    a, b = pair
    return f"{a}/{b} = {scale * a / b:.2f} per {scale:,}" if b else "-"


def print_figures(title: str, f: dict) -> None:
    print(f"\n== {title}")
    print(f"  planted at high (minimum high): {_frac(f.get('high|all', [0, 0]))}")
    for key in sorted(k for k in f if k.startswith("high|") and k != "high|all"):
        print(f"    {key[5:]:<40} {_frac(f[key])}")
    for key in sorted(k for k in f if k.startswith("medium|")):
        print(f"  weak grade at medium+: {key[7:]:<33} {_frac(f[key])}")
    print(f"  honest columns at high: {_per(f.get('honest_cols', [0, 0]), 1000)}")
    print(f"  ... without reviewed real leaks: {_per(f.get('honest_cols_reviewed', [0, 0]), 1000)}")
    print(f"  clean cases with a split finding at high: {_per(f.get('clean_cases', [0, 0]), 200)}")
    print(f"  ranking (every planted above every honest): {_frac(f.get('ranking', [0, 0]))}")
    if f.get("errors"):
        print(f"  cases the audit failed on: {f['errors'][1]}")


def short(f: dict) -> str:
    """One line of a fold's figures."""
    return (
        f"planted@high {_frac(f.get('high|all', [0, 0]))}; honest cols@high "
        f"{_per(f.get('honest_cols', [0, 0]), 1000)}; clean@high "
        f"{_per(f.get('clean_cases', [0, 0]), 200)}; ranking {_frac(f.get('ranking', [0, 0]))}"
    )


def leave_source_out(
    pairs: list[tuple[dict, Record]], calibration: Calibration, leaks: set
) -> dict:
    """Fit the calibration on four folds of packages, apply it to the fifth; pool the held-out
    figures and print each fold's."""
    held: list[tuple[dict, Record]] = []
    for k in range(FOLDS):
        train = [(c, r) for c, r in pairs if fold_of(c["package"]) != k]
        test = [(c, r) for c, r in pairs if fold_of(c["package"]) == k]
        adjust = calibration(train)
        adjusted = [(c, adjust(r)) for c, r in test]
        packages = sorted({c["package"] for c, _ in test})
        print(
            f"  fold {k} ({len(packages)} packages, {len(test)} cases): "
            f"{short(figures(adjusted, leaks))}"
        )
        held += adjusted
    return figures(held, leaks)


def raised_real_columns(pairs: list[tuple[dict, Record]], path: Path) -> int:
    """Write every real-table column at high or above (one row per package, table, column)."""
    rows: dict[tuple, list] = {}
    for case, rec in pairs:
        if "error" in rec:
            continue
        for col in case["real_columns"]:
            entry = rec["columns"].get(col)
            if entry and _at(entry[0], "high"):
                key = (case["package"], case["table"], col)
                if key not in rows or RANK[entry[0]] > RANK[rows[key][3]]:
                    rows[key] = [*key, entry[0], ";".join(entry[1]), case["title"], entry[4]]
    with path.open("w", newline="") as handle:
        w = csv.writer(handle)
        w.writerow(["package", "table", "column", "level", "kinds", "title", "summary"])
        w.writerows(sorted(rows.values()))
    return len(rows)


def main() -> None:
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--fast", action="store_true", help="a slice: the first 10 tables")
    p.add_argument("--only", help="one source package")
    p.add_argument("--workers", type=int, default=1)
    p.add_argument("--seed", type=int, default=0)
    p.add_argument("--calibrate", choices=sorted(CALIBRATIONS), default="none")
    a = p.parse_args()
    start = time.perf_counter()
    folder = cb.build(a.seed, a.only, 10 if a.fast else None)
    manifest = json.loads((folder / "manifest.json").read_text())
    cases = [folder / c for c in manifest["cases"]]
    store = cb.OUT / "results" / code_version()
    records = run_all(cases, store, a.workers)
    pairs = [
        (json.loads((f / "case.json").read_text()), r) for f, r in zip(cases, records, strict=True)
    ]
    packages = {t["package"] for t in manifest["tables"]}
    print(
        f"corpus {folder.name}: {len(manifest['tables'])} tables, {len(packages)} packages, "
        f"{len(cases)} cases; results {store.name}; audit seconds "
        f"{sum(r['seconds'] for r in records):.0f}"
    )
    leaks = reviewed_leaks()
    print_figures("in-source (constants)", figures(pairs, leaks))
    calibration = CALIBRATIONS[a.calibrate]
    if a.calibrate != "none":
        adjust = calibration(pairs)
        print_figures(
            f"in-source ({a.calibrate}, fitted on all)",
            figures([(c, adjust(r)) for c, r in pairs], leaks),
        )
    print(f"\nleave-source-out ({a.calibrate}): {FOLDS} folds by package")
    print_figures(f"held-out sources ({a.calibrate})", leave_source_out(pairs, calibration, leaks))
    n = raised_real_columns(pairs, cb.OUT / "raised_real_columns.csv")
    print(
        f"\nreal-table columns at high or above: {n} (benchmarks/out/corpus/"
        f"raised_real_columns.csv; verdicts in {REVIEW.name})"
    )
    print(f"wall seconds {time.perf_counter() - start:.0f}")


if __name__ == "__main__":
    main()
