"""Every registered probe: valid evidence, the same result for the same seed, its input
untouched, and no crash on empty, constant, all-missing or one-class columns."""

import json

import numpy as np
import pandas as pd
import pytest

from featureaudit.evidence import KINDS, Evidence, Skip
from featureaudit.levels import LEVEL_NAMES
from featureaudit.registry import Probe, register, registered, unregister
from featureaudit.settings import Settings
from featureaudit.table import build_table

PROBES = sorted(registered())


def _awkward_table():
    rng = np.random.default_rng(0)
    n = 300
    y = rng.integers(0, 2, n)
    frame = pd.DataFrame({
        "good": rng.normal(size=n) + y, "constant": 1.0, "all_missing": np.nan,
        "one_value_text": "same", "mostly_missing": np.where(rng.random(n) < 0.97, np.nan, 1.0),
        "mixed": [str(v) if i % 3 else "n/a" for i, v in enumerate(rng.integers(0, 9, n))],
        "when": pd.Timestamp("2025-01-01") + pd.to_timedelta(rng.integers(0, 200, n), "D"),
        "customer": rng.integers(0, 40, n), "split": np.where(rng.random(n) < 0.8, "train", "test"),
        "decided_at": pd.Timestamp("2025-03-01") + pd.to_timedelta(rng.integers(0, 200, n), "D"),
        "y": y})
    return frame


@pytest.fixture()
def table():
    return build_table(_awkward_table(), target="y", split_column="split",
                       label_time="decided_at", entity="customer")


@pytest.mark.parametrize("name", PROBES)
def test_probe_declares_itself(name):
    cls = registered()[name]
    assert cls.scope in ("column", "table") and set(cls.kinds) <= set(KINDS)
    assert len((cls.__doc__ or "").strip()) > 40


@pytest.mark.parametrize("name", PROBES)
def test_probe_returns_valid_evidence_and_survives_awkward_columns(name, table):
    evidence, skipped = registered()[name]().run(table, Settings())
    for e in evidence:
        assert isinstance(e, Evidence) and e.probe == name and e.kind in registered()[name].kinds
        assert e.level in LEVEL_NAMES
        assert e.column is None or e.column in table.frame.columns
        json.dumps(e.to_dict(), allow_nan=False)
    assert all(isinstance(s, Skip) and s.reason for s in skipped)
    for e in evidence:
        if e.column in ("constant", "all_missing", "one_value_text"):
            assert e.level == "none"


@pytest.mark.parametrize("name", PROBES)
def test_probe_is_deterministic_for_a_seed_and_does_not_mutate(name, table):
    before = table.frame.copy()
    first = registered()[name]().run(table, Settings(seed=3))
    second = registered()[name]().run(table, Settings(seed=3))
    assert [e.to_dict() for e in first[0]] == [e.to_dict() for e in second[0]]
    pd.testing.assert_frame_equal(table.frame, before)


@pytest.mark.parametrize("name", PROBES)
def test_probe_with_a_one_class_target_skips_or_stays_quiet(name):
    frame = _awkward_table()
    frame["y"] = 1
    t = build_table(frame, target="y", split_column="split")
    evidence, skipped = registered()[name]().run(t, Settings())
    assert all(e.level in ("none", "low") or e.column is None for e in evidence)


def test_registry_rejects_bad_declarations():
    with pytest.raises(TypeError, match="docstring"):
        @register
        class NoDoc(Probe):
            name = "nodoc"
            kinds = ("target_proxy",)

            def run(self, table, settings):
                return [], []
    with pytest.raises(TypeError, match="already registered"):
        @register
        class Again(Probe):
            """A second probe named like the first."""
            name = PROBES[0]
            kinds = ("target_proxy",)

            def run(self, table, settings):
                return [], []
    with pytest.raises(TypeError, match="kinds"):
        @register
        class BadKind(Probe):
            """A probe with a kind outside the contract."""
            name = "badkind"
            kinds = ("made_up",)

            def run(self, table, settings):
                return [], []
    unregister("nodoc")
    unregister("badkind")


def test_no_probe_fails_through_the_pipeline():
    import featureaudit as fa
    result = fa.audit(_awkward_table(), target="y", split_column="split",
                      label_time="decided_at", entity="customer")
    assert not [s for s in result.document["skipped"] if "failed" in s["reason"]]
    assert not [w for w in result.document["warnings"] if "failed" in w]
