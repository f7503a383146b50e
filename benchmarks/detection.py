"""Detection bench: planted leaks on real bundled data, and clean controls.

Prints, per case, the level and kinds featureaudit gave the planted column (or split
finding), then recall at level high, kind accuracy, and false positives at level high on
the original (clean) columns and on clean controls.

    python benchmarks/detection.py [--seeds 3] [--only PATTERN] [--dump FILE] [--fits]
        [--partitions] [--engine stream --sample-share 0.5]

``--fits`` adds the fitted-step matrix of benchmarks/fits_matrix.py (each scikit-learn
preprocessing step fitted on all rows or on the training rows, two datasets, three storage
types) and prints its figures with the rest; ``--partitions`` the cases of
benchmarks/partitions.py (a scaler fitted on train + valid, before KFold, SMOTE before the
split, and their clean twins) with their tallies.

``--engine stream`` audits every case whose held-out rows sit in a split column (or that
has no split) through the stream engine: the table is written as four Parquet parts and the
probes run on a seeded sample of ``--sample-share`` of its rows (1.0, the default, holds
every row: the same levels as in memory are expected). Cases with a separate held-out
table stay in memory and are counted as such.

``--dump FILE`` writes one JSON line per column and run (case, seed, role: planted, clean
or other, level, kinds and the solo probe's detail), so a change to a rule can be weighed
on every column of the bench without re-running the audits.

The cases of benchmarks/detection_cases.py (one or more per failure class, planted and
clean, on data the rest of the bench does not use) follow, with figures per class and kind
for the "tune" and "check" sets, and a ranking figure: the share of runs in which every
planted column scores above every clean one. Runs are sequential, one line per run.
"""

from __future__ import annotations

import argparse
import fnmatch
import json
import sys
import time
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
import pandas as pd
import statsmodels.api as sm
from sklearn.datasets import load_breast_cancer, load_diabetes, load_iris, load_wine

import featureaudit as fa

sys.path.insert(0, str(__import__("pathlib").Path(__file__).parent))
import detection_cases as dc  # noqa: E402

HIGH = ("high", "critical")
DUMP: list = []  # the open --dump file, if any


def dump(case: str, seed: int, result: fa.AuditResult, planted: set[str], clean: set[str]) -> None:
    """One JSON line per column of a run, for weighing a rule offline (``--dump``)."""
    if not DUMP:
        return
    for col in result.document["columns"]:
        name = col["column"]
        solo = [e for e in col.get("evidence", []) if e.get("probe") == "solo"]
        role = "planted" if name in planted else "clean" if name in clean else "other"
        line = {
            "case": case,
            "seed": seed,
            "column": name,
            "role": role,
            "level": col["level"],
            "kinds": col.get("kinds", []),
            "solo": [{"level": e["level"], "detail": e.get("detail")} for e in solo],
        }
        DUMP[0].write(json.dumps(line, default=str) + "\n")


def _sk(loader: Callable, target: str) -> Callable[[], tuple[pd.DataFrame, str]]:
    def load() -> tuple[pd.DataFrame, str]:
        data = loader(as_frame=True)
        frame = data.data.copy()
        frame[target] = data.target.to_numpy()
        return frame, target

    return load


def _fair() -> tuple[pd.DataFrame, str]:
    frame = sm.datasets.fair.load_pandas().data.copy()
    frame["had_affair"] = (frame.pop("affairs") > 0).astype(int)
    return frame, "had_affair"


def _star98() -> tuple[pd.DataFrame, str]:
    frame = sm.datasets.star98.load_pandas().data.copy()
    frame = frame.drop(columns=["NABOVE"])
    frame["below"] = frame.pop("NBELOW").astype(float)
    return frame, "below"


def _anes96() -> tuple[pd.DataFrame, str]:
    frame = sm.datasets.anes96.load_pandas().data.copy()
    frame["vote"] = frame["vote"].astype(int)
    return frame, "vote"


DATASETS: dict[str, Callable[[], tuple[pd.DataFrame, str]]] = {
    "breast_cancer": _sk(load_breast_cancer, "label"),
    "wine": _sk(load_wine, "cultivar"),
    "iris": _sk(load_iris, "species"),
    "diabetes": _sk(load_diabetes, "progression"),
    "fair (statsmodels)": _fair,
    "star98 (statsmodels)": _star98,
    "anes96 (statsmodels)": _anes96,
}


@dataclass
class Outcome:
    case: str
    expected: str
    level: str
    kinds: tuple[str, ...]
    clean_high: list[str]

    @property
    def found(self) -> bool:
        return self.level in HIGH

    @property
    def kind_right(self) -> bool:
        return self.expected in self.kinds


def _classes(y: pd.Series) -> int:
    return int(y.nunique())


def plant(
    kind: str, frame: pd.DataFrame, target: str, rng: np.random.Generator
) -> tuple[pd.DataFrame, dict]:
    """Add one leak; return the frame and the audit arguments that go with it."""
    y = frame[target].to_numpy()
    numeric = _classes(frame[target]) > 20
    args: dict = {"target": target}
    out = frame.copy()
    if kind == "noisy_copy":
        if numeric:
            robust_sd = float(np.subtract(*np.percentile(y, [75, 25]))) / 1.349
            out["leak"] = y + rng.normal(0, 0.3 * robust_sd, len(y))
        else:
            k = _classes(frame[target])
            codes = pd.factorize(y, sort=True)[0]
            flip = rng.random(len(y)) < 0.05
            out["leak"] = np.where(flip, (codes + rng.integers(1, k, len(y))) % k, codes)
    elif kind == "after_outcome_count":
        high = y > np.median(y) if numeric else y == np.max(y)
        out["leak"] = np.where(high, rng.poisson(3.0, len(y)), rng.poisson(0.4, len(y)))
    elif kind == "filled_when_positive":
        high = y > np.median(y) if numeric else y == np.max(y)
        value = rng.uniform(10, 500, len(y))
        out["leak"] = np.where(high ^ (rng.random(len(y)) < 0.04), value, np.nan)
    elif kind == "sorted_with_id":
        out = out.sort_values(target, kind="stable").reset_index(drop=True)
        out.insert(0, "record_id", np.arange(1, len(out) + 1))
    elif kind == "recorded_after_cutoff":
        label = pd.Timestamp("2024-01-01") + pd.to_timedelta(rng.integers(0, 700, len(y)), "D")
        out["decided_at"] = label
        lag = np.where(
            rng.random(len(y)) < 0.4, rng.uniform(1, 30, len(y)), -rng.uniform(1, 60, len(y))
        )
        out["leak"] = label + pd.to_timedelta(lag * 86400, unit="s")
        args.update(label_time="decided_at")
    elif kind == "random_split_in_time":
        out["decided_at"] = pd.Timestamp("2024-01-01") + pd.to_timedelta(
            np.sort(rng.integers(0, 700, len(y))), "D"
        )
        out["split"] = np.where(rng.random(len(y)) < 0.8, "train", "test")
        args.update(label_time="decided_at", split_column="split")
    return out, args


EXPECTED = {
    "noisy_copy": "target_proxy",
    "after_outcome_count": "target_proxy",
    "filled_when_positive": "target_proxy",
    "sorted_with_id": "row_order_tells_target",
    "recorded_after_cutoff": "recorded_after_cutoff",
    "random_split_in_time": "time_overlap_across_split",
}


ENGINE = {"engine": "memory", "share": 1.0, "streamed": 0, "in_memory": 0}


def audit_frame(frame: pd.DataFrame, seed: int, **args: object) -> fa.api.AuditResult:
    """``fa.audit`` of the frame, through the stream engine with ``--engine stream`` (four
    Parquet parts, a sample of the chosen share of rows) where the case allows it."""
    if ENGINE["engine"] != "stream" or args.get("test") is not None:
        ENGINE["in_memory"] += 1
        return fa.audit(frame, seed=seed, **args)
    import tempfile
    from pathlib import Path

    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp) / "parts"
        folder.mkdir()
        try:
            for i, rows in enumerate(np.array_split(np.arange(len(frame)), 4)):
                frame.iloc[rows].to_parquet(folder / f"part-{i}.parquet", index=False)
        except (TypeError, ValueError, ImportError) as exc:
            print(f"  (kept in memory: {type(exc).__name__} writing Parquet)")
            ENGINE["in_memory"] += 1
            return fa.audit(frame, seed=seed, **args)
        rows = max(100, int(np.ceil(ENGINE["share"] * len(frame))))
        ENGINE["streamed"] += 1
        return fa.audit(str(folder), seed=seed, engine="stream", sample_rows=rows, **args)


def run_case(name: str, kind: str, seed: int) -> Outcome:
    frame, target = DATASETS[name]()
    frame = frame.sample(frac=1, random_state=seed).reset_index(drop=True)
    originals = [c for c in frame.columns if c != target]
    planted, args = plant(kind, frame, target, np.random.default_rng(seed))
    result = audit_frame(planted, seed, **args)
    leak = {"record_id"} if kind == "sorted_with_id" else {"leak"}
    dump(f"{name} / {kind}", seed, result, leak, set(originals))
    cols = result.columns.set_index("column")
    clean_high = [c for c in originals if c in cols.index and cols.loc[c, "level"] in HIGH]
    expected = EXPECTED[kind]
    if kind == "sorted_with_id":
        row = cols.loc["record_id"]
        level, kinds = row["level"], tuple(row["kinds"])
    elif kind == "random_split_in_time":
        found = [f for f in result.document["dataset_findings"] if f["kind"] == expected]
        level = found[0]["level"] if found else "none"
        kinds = (expected,) if found and level != "none" else ()
    else:
        level, kinds = cols.loc["leak", "level"], tuple(cols.loc["leak", "kinds"])
    return Outcome(f"{name} / {kind} / seed {seed}", expected, level, kinds, clean_high)


def run_control(name: str, seed: int) -> tuple[list[str], list[str]]:
    frame, target = DATASETS[name]()
    frame = frame.sample(frac=1, random_state=seed).reset_index(drop=True)
    result = audit_frame(frame, seed, target=target)
    dump(f"{name} / control", seed, result, set(), set(frame.columns) - {target})
    cols = [c["column"] for c in result.document["columns"] if c["level"] in HIGH]
    split = [f["kind"] for f in result.document["dataset_findings"] if f["level"] in HIGH]
    return cols, split


def old_cases(seeds: int, only: str | None) -> None:
    """The original planted cases and clean controls."""
    outcomes: list[Outcome] = []
    for name in DATASETS:
        for kind in EXPECTED:
            if only and not fnmatch.fnmatch(f"{name} / {kind}", f"*{only}*"):
                continue
            for seed in range(seeds):
                o = run_case(name, kind, seed)
                outcomes.append(o)
                mark = "ok " if o.found and o.kind_right else "MISS"
                print(
                    f"{mark} {o.case:<58} {o.level:<8} {','.join(o.kinds) or '-'}"
                    + (f"  clean at high: {o.clean_high}" if o.clean_high else "")
                )
    controls = []
    for name in DATASETS:
        for seed in range(seeds):
            cols, split = run_control(name, seed)
            controls.append((name, seed, cols, split))
            if cols or split:
                print(f"FP  control {name} seed {seed}: columns {cols} split {split}")
    found = sum(o.found for o in outcomes)
    kind_ok = sum(o.found and o.kind_right for o in outcomes)
    clean_fp = sum(len(o.clean_high) for o in outcomes)
    clean_total = sum(len(DATASETS[o.case.split(" / ")[0]]()[0].columns) - 1 for o in outcomes)
    ctrl_fp = sum(bool(c[2] or c[3]) for c in controls)
    print()
    print(
        f"planted leaks found at high or above: {found}/{len(outcomes)} "
        f"({found / len(outcomes):.0%}); with the right kind: {kind_ok}/{len(outcomes)}"
    )
    print(f"clean columns at high or above in planted runs: {clean_fp}/{clean_total}")
    print(f"clean controls with any finding at high or above: {ctrl_fp}/{len(controls)}")


@dataclass
class Run:
    """One new-style case over one seed, scored against the expectation written beforehand."""

    case: dc.Case
    seed: int
    planted: dict[str, tuple[str, tuple[str, ...], float]]  # column -> level, kinds, score
    split: tuple[str, str] | None  # planted kind -> level found
    clean_high: list[str]
    clean_total: int
    any_high: list[str]
    ranked: bool | None
    covered: list[bool]
    expected: dict[str, str]
    ill_posed: str = ""


RANK = {"none": 0, "low": 1, "medium": 2, "high": 3, "critical": 4}


def _ok(level: str, kinds: tuple[str, ...], kind: str, at: str) -> bool:
    return RANK.get(level, 0) >= RANK[at] and kind in kinds


def run_new(case: dc.Case, seed: int) -> Run:
    frame, target = dc.DATASETS[case.dataset]()
    frame = frame.sample(frac=1, random_state=seed).reset_index(drop=True)
    originals = [c for c in frame.columns if c != target]
    built = case.build(frame, target, np.random.default_rng(seed))
    if built.ill_posed:
        dc.cleanup(built)
        return Run(case, seed, {}, None, [], 0, [], None, [], {}, built.ill_posed)
    try:
        result = audit_frame(built.frame, seed, **built.args)
    finally:
        dc.cleanup(built)
    doc = result.document
    cols = {c["column"]: c for c in doc["columns"]}
    planted = {
        c: (cols[c]["level"], tuple(cols[c]["kinds"]), float(cols[c]["score"]))
        if c in cols
        else ("none", (), 0.0)
        for c in built.planted
    }
    split = None
    if built.split_kind:
        levels = [f["level"] for f in doc["dataset_findings"] if f["kind"] == built.split_kind]
        split = (built.split_kind, max(levels, key=lambda v: RANK.get(v, 0), default="none"))
    clean = [
        c
        for c in dict.fromkeys(originals + built.clean)
        if c in cols and c not in built.planted and c != "split"
    ]
    clean_high = [c for c in clean if cols[c]["level"] in HIGH]
    dump(f"c{case.klass} {case.dataset} {case.name}", seed, result, set(built.planted), set(clean))
    any_high = [c for c, v in cols.items() if v["level"] in HIGH]
    any_high += [f"*{f['kind']}*" for f in doc["dataset_findings"] if f["level"] in HIGH]
    ranked = None
    if planted and clean:
        ranked = min(p[2] for p in planted.values()) > max(float(cols[c]["score"]) for c in clean)
    covered = [
        any(e.get("probe") == "fitscope" for e in cols[c].get("evidence", []))
        for c in built.coverage
        if c in cols
    ]
    return Run(
        case,
        seed,
        planted,
        split,
        clean_high,
        len(clean),
        any_high,
        ranked,
        covered,
        dict(built.planted),
    )


def _line(r: Run) -> str:
    head = (
        f"{r.case.set:<5} c{r.case.klass:<2} {r.case.dataset:<12} {r.case.name:<28} "
        f"s{r.seed} {r.case.status:<7}"
    )
    if r.ill_posed:
        return f"N/A  {head} ill-posed: {r.ill_posed}"
    parts, good = [], True
    for col, (level, kinds, score) in sorted(r.planted.items()):
        parts.append(f"{col}={level}:{','.join(kinds) or '-'}:{score:.2f}")
    for col, (level, kinds, _score) in r.planted.items():
        good &= _ok(level, kinds, r.expected[col], "high")
    if r.split:
        parts.append(f"*{r.split[0]}*={r.split[1]}")
        good &= r.split[1] in HIGH
    if r.case.status == "clean":
        good = not r.any_high
        parts.append("high: " + (",".join(r.any_high) or "-"))
    elif r.clean_high:
        parts.append("clean at high: " + ",".join(r.clean_high))
    if r.ranked is not None:
        parts.append(f"ranked={'yes' if r.ranked else 'no'}")
    if r.covered:
        parts.append(f"fitscope evidence={'yes' if all(r.covered) else 'no'}")
    return f"{'ok ' if good else 'BAD'}  {head} " + " ".join(parts)


def _figures(runs: list[Run], expected: dict[tuple[str, str], str], label: str) -> str:
    """Recall at high/medium, clean-column FPs at high, clean cases at high, ranking share."""
    hits_h = hits_m = n_planted = 0
    for r in runs:
        for col, (level, kinds, _s) in r.planted.items():
            kind = expected[(r.case.name + "|" + r.case.dataset, col)]
            n_planted += 1
            hits_h += _ok(level, kinds, kind, "high")
            hits_m += _ok(level, kinds, kind, "medium")
        if r.split:
            n_planted += 1
            hits_h += r.split[1] in HIGH
            hits_m += RANK.get(r.split[1], 0) >= RANK["medium"]
    fp = sum(len(r.clean_high) for r in runs)
    cols = sum(r.clean_total for r in runs)
    clean_runs = [r for r in runs if r.case.status == "clean"]
    clean_bad = sum(bool(r.any_high) for r in clean_runs)
    ranked = [r.ranked for r in runs if r.ranked is not None]

    def frac(a: int, b: int) -> str:
        return f"{a}/{b}" + (f" ({a / b:.2f})" if b else "")

    return (
        f"{label:<34} recall@high {frac(hits_h, n_planted):<14} "
        f"recall@medium {frac(hits_m, n_planted):<14} clean cols@high {frac(fp, cols):<14} "
        f"clean cases@high {frac(clean_bad, len(clean_runs)):<14} "
        f"ranked {frac(sum(ranked), len(ranked))}"
    )


def new_cases(seeds: int, only: str | None) -> None:
    cases = [
        c
        for c in dc.CASES
        if not only or fnmatch.fnmatch(f"c{c.klass} {c.dataset} {c.name}", f"*{only}*")
    ]
    runs: list[Run] = []
    expected: dict[tuple[str, str], str] = {}
    print("# new cases (set, class, dataset, case, seed, status: what was found)")
    for case in cases:
        for seed in range(seeds):
            r = run_new(case, seed)
            for col, kind in r.expected.items():  # as the case wrote them before the audit
                expected[(case.name + "|" + case.dataset, col)] = kind
            print(_line(r), flush=True)
            if not r.ill_posed:
                runs.append(r)
    print()
    print("# figures per class and set (planted columns and planted split findings)")
    for klass in sorted({r.case.klass for r in runs}):
        for part in ("tune", "check"):
            sel = [r for r in runs if r.case.klass == klass and r.case.set == part]
            if sel:
                print(_figures(sel, expected, f"class {klass} {part}"))
    print()
    print("# figures per expected kind")
    kinds = sorted(set(expected.values()) | {r.split[0] for r in runs if r.split})
    for kind in kinds:
        for part in ("tune", "check"):
            sel = [
                r
                for r in runs
                if r.case.set == part
                and (
                    any(
                        expected[(r.case.name + "|" + r.case.dataset, c)] == kind for c in r.planted
                    )
                    or (r.split and r.split[0] == kind)
                )
            ]
            if sel:
                print(_figures(sel, expected, f"{kind} {part}"))
    print()
    print("# overall (clean cases included)")
    for part in ("tune", "check"):
        print(_figures([r for r in runs if r.case.set == part], expected, f"all {part}"))
    print(_figures(runs, expected, "all"))
    cov = [all(r.covered) for r in runs if r.covered]
    print(
        f"coverage: clean fitscope-examined columns with fitscope evidence: {sum(cov)}/{len(cov)}"
    )
    ranked = [r.ranked for r in runs if r.ranked is not None]
    print(
        f"ranking: runs where every planted column outranks every clean one: "
        f"{sum(ranked)}/{len(ranked)}"
    )


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--seeds", type=int, default=3)
    parser.add_argument(
        "--only",
        default=None,
        help="run only cases whose 'c<class> <dataset> <case>' or "
        "'<dataset> / <kind>' contains PATTERN (shell wildcards allowed)",
    )
    parser.add_argument("--skip-old", action="store_true", help="run only the new cases")
    parser.add_argument(
        "--fits",
        action="store_true",
        help="also run the fitted-step matrix (benchmarks/fits_matrix.py) and print its figures",
    )
    parser.add_argument(
        "--partitions",
        action="store_true",
        help="also run the partition, fold and oversampling cases (benchmarks/partitions.py)",
    )
    parser.add_argument("--dump", default=None, metavar="FILE", help="write every column's figures")
    parser.add_argument("--engine", default="memory", choices=["memory", "stream"])
    parser.add_argument("--sample-share", type=float, default=1.0, help="stream: rows sampled")
    args = parser.parse_args()
    ENGINE["engine"], ENGINE["share"] = args.engine, args.sample_share
    if args.dump:
        DUMP.append(open(args.dump, "w"))  # noqa: SIM115 - open for the whole run
    start = time.perf_counter()
    if not args.skip_old:
        old_cases(args.seeds, args.only)
    new_cases(args.seeds, args.only)
    if args.fits:
        import fits_matrix  # benchmarks/ is on the path

        print()
        print("# fitted steps on all rows vs on the training rows (fits_matrix.py)")
        counts = fits_matrix.run(args.seeds)
        leaky, clean = counts[True], counts[False]
        print(
            f"fit_on_all_rows steps           recall@high {leaky[0]}/{leaky[1]}   "
            f"clean variants@medium {clean[0]}/{clean[1]}"
        )
    if args.partitions:
        import partitions  # benchmarks/ is on the path

        print()
        print("# validation sets, CV folds and oversampling (partitions.py)")
        tallies = partitions.run(args.seeds)
        partitions.print_tallies(tallies)
    if args.engine == "stream":
        print(
            f"engine: stream on {ENGINE['streamed']} runs (sample share {args.sample_share:g}), "
            f"memory on {ENGINE['in_memory']} (a separate held-out table)"
        )
    print(f"wall time: {time.perf_counter() - start:.1f} s")


if __name__ == "__main__":
    main()
