"""The common checks every probe must pass, for built-in and third-party probes alike, in the
manner of scikit-learn's ``sklearn.utils.estimator_checks``.

A plugin's test suite runs them in one line::

    from featureaudit.testing import parametrize_with_checks

    @parametrize_with_checks([MyProbe])
    def test_my_probe(probe, check):
        check(probe)

:func:`yield_checks` yields ``(name, check)`` pairs for one probe. Each check asserts what the
probe must say (a skip with a reason, or the levels it may reach), not only that it does not
crash. Probes run here as the pipeline runs them: through the gate of their declared
capabilities first.
"""

from __future__ import annotations

import dataclasses
import json
import re
from collections.abc import Callable, Iterable, Iterator
from typing import Any

import numpy as np
import pandas as pd

from featureaudit.evidence import Evidence, Skip
from featureaudit.kinds import KINDS, PAIR_KINDS
from featureaudit.levels import LEVEL_NAMES, Level
from featureaudit.pipeline import capability_skip
from featureaudit.registry import PAIRS, Capabilities, Probe, thresholds_dict
from featureaudit.settings import Settings
from featureaudit.splits import pair_views
from featureaudit.table import AuditTable, build_table

__all__ = ["Check", "awkward_frame", "noise_frame", "parametrize_with_checks", "yield_checks"]

Check = Callable[[type[Probe]], None]
# kinds that need a target to mean anything
TARGET_KINDS = ("target_proxy", "row_order_tells_target")


def awkward_frame(n: int = 300, seed: int = 0) -> pd.DataFrame:
    """One honest signal among constant, empty, all-missing, mixed and dated columns."""
    rng = np.random.default_rng(seed)
    y = rng.integers(0, 2, n)
    return pd.DataFrame(
        {
            "good": rng.normal(size=n) + y,
            "constant": 1.0,
            "all_missing": np.nan,
            "one_value_text": "same",
            "empty_text": "",
            "mostly_missing": np.where(rng.random(n) < 0.97, np.nan, 1.0),
            "mixed": [str(v) if i % 3 else "n/a" for i, v in enumerate(rng.integers(0, 9, n))],
            "when": pd.Timestamp("2025-01-01") + pd.to_timedelta(rng.integers(0, 200, n), "D"),
            "customer": rng.integers(0, 40, n),
            "split": np.where(rng.random(n) < 0.8, "train", "test"),
            "decided_at": pd.Timestamp("2025-03-01")
            + pd.to_timedelta(rng.integers(0, 200, n), "D"),
            "y": y,
        }
    )


def noise_frame(n: int = 400, seed: int = 1, target: str = "binary") -> pd.DataFrame:
    """Independent noise columns, a random target and a random split: nothing to find."""
    rng = np.random.default_rng(seed)
    frame = pd.DataFrame({f"x{i}": rng.normal(size=n) for i in range(5)})
    frame["level"] = rng.choice(["a", "b", "c"], n)
    frame["count"] = rng.poisson(3.0, n)
    frame["split"] = np.where(rng.random(n) < 0.8, "train", "test")
    frame["y"] = {
        "binary": rng.integers(0, 2, n),
        "multiclass": rng.integers(0, 4, n),
        "numeric": rng.normal(size=n),
    }[target]
    return frame


def awkward_table() -> AuditTable:
    return build_table(
        awkward_frame(),
        target="y",
        split_column="split",
        label_time="decided_at",
        entity="customer",
    )


def _run(
    cls: type[Probe], table: AuditTable, settings: Settings | None = None
) -> tuple[list[Evidence], list[Skip]]:
    gate = capability_skip(cls, table)
    if gate is not None:
        return [], [gate]
    evidence, skipped = cls().run(table, settings or Settings())
    assert isinstance(evidence, list) and isinstance(skipped, list)
    for e in evidence:
        assert isinstance(e, Evidence) and e.probe == cls.name and e.kind in cls.kinds
        assert e.level in LEVEL_NAMES
        assert e.column is None or e.column in table.frame.columns
        json.dumps(e.to_dict(), allow_nan=False)
    assert all(isinstance(s, Skip) and s.probe == cls.name and s.reason.strip() for s in skipped)
    return evidence, skipped


def _says_something(evidence: list[Evidence], skipped: list[Skip]) -> None:
    assert evidence or skipped, "a probe that finds nothing to measure must say why (a Skip)"


def _highest(evidence: list[Evidence]) -> Level:
    return max((e.rank for e in evidence), default=Level.NONE)


def check_declares_itself(cls: type[Probe]) -> None:
    assert cls.scope in ("column", "table") and cls.kinds and set(cls.kinds) <= set(KINDS)
    assert len((cls.__doc__ or "").strip()) > 40
    assert isinstance(cls.capabilities, Capabilities)
    assert set(cls.capabilities.pairs) <= set(PAIRS)
    if cls.capabilities.compares_sides:  # it must report something judged per pair
        assert set(cls.kinds) & set(PAIR_KINDS), (cls.kinds, PAIR_KINDS)
    if cls.thresholds is not None:
        assert dataclasses.is_dataclass(cls.thresholds)
        declared: Any = type(cls.thresholds)
        assert declared.__dataclass_params__.frozen


def _numbers(value: Any) -> Iterator[float]:
    if isinstance(value, dict):
        for v in value.values():
            yield from _numbers(v)
    elif isinstance(value, (list, tuple)):
        for v in value:
            yield from _numbers(v)
    elif isinstance(value, (int, float)) and not isinstance(value, bool):
        yield float(value)


def _spellings(x: float) -> set[str]:
    """How a description may write ``x``: as given, rounded, as a percentage, with commas."""
    out = {f"{x:g}", f"{x:,g}", f"{x:.2f}", f"{x:.3f}", f"{x:,.0f}", f"{100 * x:g}"}
    if x == int(x):
        out |= {str(int(x)), f"{int(x):,}"}
    return out


def check_describe_names_every_threshold(cls: type[Probe]) -> None:
    """The methods section and ``settings.methods`` come from ``describe``: every number the
    probe's levels use must be stated there."""
    text = cls.describe(Settings())
    assert isinstance(text, str) and len(text.split()) >= 20, text
    if cls.thresholds is None:
        return
    words = set(re.findall(r"[0-9][0-9,]*(?:\.[0-9]+)?(?:e[-+]?[0-9]+)?", text))
    numbers = set(_numbers(thresholds_dict(cls.thresholds)))
    missing = sorted(x for x in numbers if not _spellings(x) & words)
    assert not missing, f"{cls.name}.describe() does not state thresholds {missing}"


def check_valid_evidence_on_awkward_columns(cls: type[Probe]) -> None:
    table = awkward_table()
    evidence, skipped = _run(cls, table)
    _says_something(evidence, skipped)
    for e in evidence:
        if e.column in ("constant", "all_missing", "one_value_text", "empty_text"):
            assert e.level == "none", (e.column, e.level, e.summary)


def check_deterministic_for_a_seed(cls: type[Probe]) -> None:
    first = _run(cls, awkward_table(), Settings(seed=3))
    second = _run(cls, awkward_table(), Settings(seed=3))
    assert [e.to_dict() for e in first[0]] == [e.to_dict() for e in second[0]]
    assert [s.to_dict() for s in first[1]] == [s.to_dict() for s in second[1]]


def check_does_not_mutate_its_input(cls: type[Probe]) -> None:
    table = awkward_table()
    assert table.y is not None and table.heldout is not None
    frame, y, heldout = table.frame.copy(), table.y.copy(), table.heldout.copy()
    _run(cls, table)
    pd.testing.assert_frame_equal(table.frame, frame)
    np.testing.assert_array_equal(table.y, y)
    np.testing.assert_array_equal(table.heldout, heldout)


def check_without_a_target(cls: type[Probe]) -> None:
    frame = awkward_frame().drop(columns=["y"])
    table = build_table(frame, split_column="split", label_time="decided_at", entity="customer")
    evidence, skipped = _run(cls, table)
    _says_something(evidence, skipped)
    assert not [e for e in evidence if e.kind == "target_proxy" and e.rank > Level.NONE]
    if set(cls.kinds) <= set(TARGET_KINDS):
        assert not evidence and any("target" in s.reason for s in skipped)


def check_without_a_split(cls: type[Probe]) -> None:
    frame = noise_frame().drop(columns=["split"])
    evidence, skipped = _run(cls, build_table(frame, target="y"))
    _says_something(evidence, skipped)
    assert _highest(evidence) < Level.HIGH, [e.summary for e in evidence if e.rank >= Level.HIGH]


def check_fewer_rows_than_folds(cls: type[Probe]) -> None:
    frame = awkward_frame(n=4, seed=2)
    frame["split"] = ["train", "train", "train", "test"]
    frame["y"] = [0, 1, 0, 1]
    table = build_table(frame, target="y", split_column="split")
    evidence, skipped = _run(cls, table)
    _says_something(evidence, skipped)
    assert _highest(evidence) <= Level.MEDIUM, "four rows cannot support a level above medium"


def check_single_column(cls: type[Probe]) -> None:
    rng = np.random.default_rng(4)
    frame = pd.DataFrame(
        {
            "x": rng.normal(size=200),
            "y": rng.integers(0, 2, 200),
            "split": np.where(rng.random(200) < 0.8, "train", "test"),
        }
    )
    evidence, skipped = _run(cls, build_table(frame, target="y", split_column="split"))
    _says_something(evidence, skipped)
    assert _highest(evidence) < Level.HIGH


def _clean_run(cls: type[Probe], target: str) -> None:
    table = build_table(noise_frame(target=target), target="y", split_column="split")
    assert table.task == target
    evidence, skipped = _run(cls, table)
    _says_something(evidence, skipped)
    assert _highest(evidence) < Level.HIGH, [e.summary for e in evidence if e.rank >= Level.HIGH]


def check_clean_binary_target(cls: type[Probe]) -> None:
    _clean_run(cls, "binary")


def check_clean_multiclass_target(cls: type[Probe]) -> None:
    _clean_run(cls, "multiclass")


def check_clean_numeric_target(cls: type[Probe]) -> None:
    _clean_run(cls, "numeric")


def check_one_class_target(cls: type[Probe]) -> None:
    frame = awkward_frame()
    frame["y"] = 1
    evidence, skipped = _run(cls, build_table(frame, target="y", split_column="split"))
    _says_something(evidence, skipped)
    assert all(e.level in ("none", "low") for e in evidence if e.column is not None)
    assert not [e for e in evidence if e.kind == "target_proxy" and e.rank > Level.NONE]


def check_runs_on_a_sampled_table(cls: type[Probe]) -> None:
    """An engine hands probes a sample of a larger table (``population_rows`` above the rows
    held): a probe judges it, or is skipped there for the reason it declares."""
    table = dataclasses.replace(awkward_table(), population_rows=30_000)
    evidence, skipped = _run(cls, table)
    _says_something(evidence, skipped)
    if cls.capabilities.needs_every_row:
        assert not evidence and any("sample" in s.reason for s in skipped)


def partitioned_table() -> AuditTable:
    """Training rows in three CV folds, and two held-out partitions (valid, test)."""
    frame = noise_frame(n=600, seed=5)
    rng = np.random.default_rng(5)
    frame["split"] = rng.choice(["train", "train", "train", "valid", "test"], len(frame))
    frame["fold"] = np.where(frame["split"] == "train", rng.integers(0, 3, len(frame)), -1)
    frame.loc[frame["split"] != "train", "fold"] = np.nan
    return build_table(frame, target="y", split_column="split", fold_column="fold")


def check_compares_every_partition_pair(cls: type[Probe]) -> None:
    """A probe that compares sides runs on every pair it declares (training against each
    partition, partitions against each other, folds), with valid evidence on each."""
    caps = cls.capabilities
    if not caps.compares_sides:
        return
    table = partitioned_table()
    views = pair_views(table, {pair: (cls.name,) for pair in caps.pairs})
    assert views, "a partitioned table with folds gives pairs to compare"
    for view in views:
        evidence, skipped = _run(cls, view.table)
        _says_something(evidence, skipped)
        assert _highest(evidence) < Level.HIGH, (view.sides, [e.summary for e in evidence])


def yield_checks(cls: type[Probe]) -> Iterator[tuple[str, Check]]:
    """Every check that applies to ``cls``, by name."""
    for check in (
        check_declares_itself,
        check_describe_names_every_threshold,
        check_runs_on_a_sampled_table,
        check_compares_every_partition_pair,
        check_valid_evidence_on_awkward_columns,
        check_deterministic_for_a_seed,
        check_does_not_mutate_its_input,
        check_without_a_target,
        check_without_a_split,
        check_fewer_rows_than_folds,
        check_single_column,
        check_clean_binary_target,
        check_clean_multiclass_target,
        check_clean_numeric_target,
        check_one_class_target,
    ):
        yield check.__name__.removeprefix("check_"), check


def parametrize_with_checks(probes: Iterable[type[Probe]]) -> Any:
    """A ``pytest.mark.parametrize`` over every common check of every probe in ``probes``,
    with arguments ``probe`` and ``check`` and ids ``<probe>-<check>``."""
    import pytest

    cases = [
        pytest.param(cls, check, id=f"{cls.name}-{name}")
        for cls in probes
        for name, check in yield_checks(cls)
    ]
    return pytest.mark.parametrize(("probe", "check"), cases)
