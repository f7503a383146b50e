"""The numbers ``solo``'s levels use (with their sources) and the figures a level follows from."""

from __future__ import annotations

from dataclasses import dataclass

from featureaudit.vocab.levels import Level


@dataclass(frozen=True)
class SoloThresholds:
    """The numbers the ``solo`` levels use, with their sources.

    - ``share_floors`` / ``share_power``: target share beyond peers (above the table's typical
      share) and power per level. Breast cancer: a 5 %-flipped copy of the target reaches
      0.49, no honest column more than 0.05 (measured, ``tests/probes/test_solo.py``); the
      floors sit between, checked on wine, diabetes and the demo scenario. On the detection
      bench (3 seeds, 7 datasets) no clean column reached high (0 false positives).
    - ``deterministic``: power alone that is critical; ``function_of_target``: (Theil's U,
      power) per level; ``strong_alone``: power worth a ``low`` even when explained; common
      practice, no source.
    - ``match_margin`` / ``match_power``: alone within this of all other columns together,
      with at least this power; common practice, no source.
    - ``min_peers``: fewer other columns cannot tell a leak from a strong feature; common
      practice, no source.
    - ``beyond_max`` / ``peer_signal``: an effect of the outcome leaves the peers at most
      ``beyond_max`` beyond the target, and the peers must then explain ``peer_signal`` of
      the column; set on breast cancer and wine (measured), no other source.
    - ``missing_as_encoding``: numeric columns missing this often enter the peer test encoded;
      common practice, no source.
    - ``max_reference`` / ``strong_reference_fits``: columns in the reference model of a wide
      table, and how many strong columns get their own leave-one-out reference fit (cost).
    - ``order_power`` / ``order_z``: identifiers and row position; z against the Mann–Whitney
      null (z >= 4 for high is common practice for many parallel tests, no source).
    - ``lift_columns`` / ``lift_power``: how many suspects or strong columns get a unique
      lift (two reference fits each; cost), and the power a column needs to get one.
    - ``lift_nil`` / ``lift_large``: a relative error reduction under 0.1 (pooled and in
      every fold: one fold above leaves the lift unsettled, star98's count) is nil, from 0.3
      (with every fold positive) large. On the bench's new cases planted leaks add 0.4–1.0
      (measured, 3 seeds); the two cut-offs themselves are common practice, no source.
    - ``lift_error_floor``: when the rest of the table already predicts the target with
      1 − AUC (or 1 − R²) under 0.005 the lift cannot be measured (palmerpenguins: the
      measurements tell the species at 1 − AUC ≈ 0.002, measured); determinism then needs
      a share beyond the typical one to reach high. ``lift_error_rows``: the same when that
      error amounts to less than one row of the smallest class wholly misranked (penguins'
      0.011 is under one Chinstrap row, so its fold lifts swing from 0 to 1); common
      practice, no source.
    - ``share_z_high``: the share's robust z (median, 1.4826·MAD, scale at least
      ``share_scale_floor``) among the table's other columns on the −log(1 − share) scale,
      needed for high by a share: breast cancer's 5 %-flipped, jittered copy stands at
      z ≈ 7 (share 0.6 against a typical 0.02); honest columns that stand out as far (z up
      to 8 there) are explained by their peers beyond the target and stay below high;
      digits' honest pixels stand at z ≈ 2 (measured, 3 was chosen between).
    - ``share_z_function``: the z a near-function of the target needs when its lift cannot
      be measured: wine's 5 %-flipped copy of the cultivar stands at z ≈ 2.6, palmerpenguins'
      honest island at 0.2 (measured); 2 was chosen between and checked on the bench's
      clean columns (see the figures below).
    - ``table_beyond``: where the peers' linear fit explains too little of the target to
      expect them to explain an outcome-caused column (``peer_signal``), the table itself can
      still show the test's power: its other columns' median ``peers_beyond_target`` at 0.3
      or more (statsmodels' modechoice: 0.68 for the honest columns, 0.006 for a jittered
      near copy of the choice, whose peers reach AUC 0.98 only nonlinearly; measured). On
      the bench no clean column is outcome-caused-looking without that power (0 of 2991
      re-decided, 3 seeds), so the value is common practice (3x ``beyond_max``), no source.
    - ``presence_power``: |TPR − FPR| of one bin's indicator; filled-only-when-positive
      columns reach 0.9 or more, breast cancer's honest columns about 0.14 (measured).
    False positives at high on the bench (3 seeds, 2026-12-03): 0 of 996 clean columns in
    the new cases and 0 of 60 clean cases, 0 of 1710 clean columns in the original planted
    cases, 0 of 21 clean controls; planted leaks at high: 63 of 63 new, 118 of 126 original.
    The same figures, and the same level for each of the bench's 3,153 column runs, with the
    rule table and issue 24's classes (2026-12-05); those classes' families
    (``benchmarks/solo_classes.py``, 4 sources x 2 seeds): 14/16, 8/8, 8/8, 16/16 as expected,
    110/110 honest columns of class 1's tables below high.
    """

    share_floors: tuple[tuple[Level, float], ...] = (
        (Level.CRITICAL, 0.35),
        (Level.HIGH, 0.20),
        (Level.MEDIUM, 0.10),
        (Level.LOW, 0.05),
    )
    share_power: tuple[tuple[Level, float], ...] = (
        (Level.CRITICAL, 0.5),
        (Level.HIGH, 0.3),
        (Level.MEDIUM, 0.2),
        (Level.LOW, 0.1),
    )
    deterministic: float = 0.98
    function_of_target: tuple[tuple[Level, float, float], ...] = (
        (Level.CRITICAL, 0.7, 0.8),
        (Level.HIGH, 0.5, 0.5),
    )
    strong_alone: float = 0.8
    match_margin: float = 0.02
    match_power: float = 0.6
    min_peers: int = 3
    beyond_max: float = 0.10
    peer_signal: float = 0.08
    missing_as_encoding: float = 0.01
    max_reference: int = 200
    strong_reference_fits: int = 2
    lift_columns: int = 3
    lift_power: float = 0.3
    lift_nil: float = 0.1
    lift_error_floor: float = 0.005
    lift_error_rows: float = 1.0
    lift_large: float = 0.3
    share_z_high: float = 3.0
    share_z_function: float = 2.0
    table_beyond: float = 0.3
    share_scale_floor: float = 0.01
    presence_power: float = 0.8
    order_power: tuple[tuple[Level, float], ...] = (
        (Level.CRITICAL, 0.6),
        (Level.HIGH, 0.2),
        (Level.MEDIUM, 0.1),
    )
    order_z: tuple[tuple[Level, float], ...] = (
        (Level.HIGH, 4.0),
        (Level.MEDIUM, 3.0),
        (Level.LOW, 2.0),
    )

    def share(self, level: Level) -> float:
        return dict(self.share_floors)[level]

    def share_min_power(self, level: Level) -> float:
        return dict(self.share_power)[level]

    def order(self, table: tuple[tuple[Level, float], ...], level: Level) -> float:
        return dict(table)[level]


THRESHOLDS = SoloThresholds()
EDGE_ROWS = 50_000  # rows the quantile edges come from in larger tables (cost, no source)


@dataclass(frozen=True)
class ProxyFigures:
    """What the level of a ``target_proxy`` follows from: the column's figures only."""

    power: float
    determinism: float
    share: float | None = None
    typical_share: float = 0.0
    others_power: float | None = None
    peers_beyond_target: float | None = None
    expected_r2_if_effect: float = 0.0
    n_peers: int = 0
    small: bool = False
    share_z: float | None = None
    lift: float | None = None
    lift_low: float = 0.0
    lift_high: float | None = None
    lift_error: float = 1.0
    presence: float = 0.0
    lift_error_rows: float | None = None
    typical_beyond: float | None = None
    r2_target: float = 0.0  # the column's linear R² on the target
    rest_power: float | None = None  # what the other columns reach without it (lift fits)
    fellow: bool = False  # a near-perfect partner of a leak found at high (``fellow_of``)
    lookup: bool = False  # every category belongs to one class, finer than the target


def measurable(error: float, error_rows: float | None, th: SoloThresholds) -> bool:
    """Whether the rest of the table leaves enough error for a column to reduce: 1 − AUC (or
    1 − R²) of at least ``lift_error_floor`` and, for classes, at least ``lift_error_rows``
    rows of the smallest class wholly misranked."""
    return error >= th.lift_error_floor and (error_rows is None or error_rows >= th.lift_error_rows)


def lift_class(f: ProxyFigures, th: SoloThresholds) -> str:
    """What the column adds to the rest of the table: ``unknown`` (not measured),
    ``unmeasurable`` (the rest already predicts the target almost without error), ``nil``,
    ``some`` or ``large``."""
    if f.lift is None:
        return "unknown"
    if not measurable(f.lift_error, f.lift_error_rows, th):
        return "unmeasurable"
    if f.lift < th.lift_nil and (f.lift_high is None or f.lift_high < th.lift_nil):
        return "nil"  # every fold agrees: nothing added
    return "large" if f.lift >= th.lift_large and f.lift_low > 0 else "some"
