"""The level of a ``target_proxy`` as a declared table of named rules: first match wins.

Each rule is a record: its name (written to the evidence as ``decided_by``), its level, its
condition (a small pure function of the column's :class:`Facts`), the figure it shows and
the sentence it says. :data:`CAPS` then lowers what the evidence cannot carry at high.
The facts are derived once from the column's figures (:func:`facts`), so every condition
reads a named fact instead of re-deriving it.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

from featureaudit.levels import Level
from featureaudit.probes.solo._thresholds import (
    THRESHOLDS,
    ProxyFigures,
    SoloThresholds,
    lift_class,
)

__all__ = ["CAPS", "RULES", "Cap", "Facts", "Rule", "decide", "facts"]


@dataclass(frozen=True)
class Facts:
    """What the rules read: the figures, and the tests on them every rule shares."""

    f: ProxyFigures
    share_level: Level  # the highest share floor the column reaches (NONE: none)
    lift: str  # unknown / unmeasurable / nil / some / large (see ``lift_class``)
    enough_peers: bool
    effect_like: bool  # the peers add at most ``beyond_max`` beyond the target
    tellable: bool  # the peers tell enough of the target to expect them to explain an effect
    told: bool  # an effect of the outcome can be told from a strong cause
    stands_out: bool  # the share stands ``share_z_high`` above the table's other shares
    beyond_apart: bool  # a share beyond the typical one that stands out at ``share_z_function``
    calibrated: bool  # the share stands out enough to be high under the fixed floor
    matches: bool  # alone as strong as all the other columns together, an effect the peers tell
    deterministic: bool
    explained: bool  # deterministic, yet explained by peers beyond the target
    near_function: Level  # CRITICAL or HIGH by Theil's U and power, else NONE
    strong: bool  # power worth a low even when explained
    present: bool  # one bin alone tells the two classes apart
    lookup: bool = False  # every category belongs to one class, finer than the target
    fellow: bool = False  # a near-perfect partner of a leak found at high


def _share_level(f: ProxyFigures, th: SoloThresholds, enough: bool) -> Level:
    if not enough or f.share is None:
        return Level.NONE
    reached = [
        lv
        for lv, floor in th.share_floors
        if f.share >= f.typical_share + floor and f.power >= th.share_min_power(lv)
    ]
    return max(reached, default=Level.NONE)


def _near_function(f: ProxyFigures, th: SoloThresholds) -> Level:
    reached = [lv for lv, u, p in th.function_of_target if f.determinism >= u and f.power >= p]
    return max(reached, default=Level.NONE)


def _told(f: ProxyFigures, th: SoloThresholds, lift: str, effect_like: bool) -> bool:
    """Whether an effect of the outcome can be told from a strong cause: the peers add
    nothing beyond the target, and they (linearly), or the rest of the table with a large
    lift, or the table's other columns (explained by theirs well beyond the target) show
    the test had the power to see a cause. The peers' linear fit may miss what they tell of
    the target (modechoice: an AUC of 0.98 from a linear R² of 0.14); a large lift or a
    telling table counts only where the rest tells the target: beside weak peers a strong
    cause adds as much and is as unexplained (issue 24, class 3)."""
    if not effect_like:
        return False
    if f.expected_r2_if_effect >= th.peer_signal:
        return True
    if f.rest_power is not None and f.r2_target * f.rest_power < th.peer_signal:
        return False
    table_tells = f.typical_beyond is not None and f.typical_beyond >= th.table_beyond
    return lift == "large" or (table_tells and lift != "nil")


def _calibrated(f: ProxyFigures, th: SoloThresholds, enough: bool, told: bool) -> bool:
    """A share that stands ``share_z_high`` above the table's, over the medium floor."""
    z, share = f.share_z, f.share if f.share is not None else 0.0
    return (
        enough
        and told
        and z is not None
        and z >= th.share_z_high
        and share >= f.typical_share + th.share(Level.MEDIUM)
        and f.power >= th.share_min_power(Level.HIGH)
    )


def _matches(f: ProxyFigures, th: SoloThresholds, enough: bool, effect_like: bool) -> bool:
    """Alone as strong as all the other columns together, an effect the peers can tell."""
    return (
        enough
        and effect_like
        and f.expected_r2_if_effect >= th.peer_signal
        and f.others_power is not None
        and f.power >= max(th.match_power, f.others_power - th.match_margin)
    )


def facts(f: ProxyFigures, th: SoloThresholds = THRESHOLDS) -> Facts:
    """The shared tests of the figures (a pure function)."""
    enough = f.n_peers >= th.min_peers and f.share is not None
    share = f.share if f.share is not None else 0.0
    effect_like = f.peers_beyond_target is not None and f.peers_beyond_target <= th.beyond_max
    lift = lift_class(f, th)
    told = _told(f, th, lift, effect_like)
    z_ok = f.share_z is None or f.share_z >= th.share_z_function
    return Facts(
        f=f,
        share_level=_share_level(f, th, enough),
        lift=lift,
        enough_peers=enough,
        effect_like=effect_like,
        tellable=f.expected_r2_if_effect >= th.peer_signal,
        told=told,
        stands_out=f.share_z is None or f.share_z >= th.share_z_high,
        beyond_apart=share >= f.typical_share + th.share(Level.LOW) and z_ok,
        calibrated=_calibrated(f, th, enough, told),
        matches=_matches(f, th, enough, effect_like),
        deterministic=f.power >= th.deterministic,
        explained=enough and not effect_like and share < f.typical_share + th.share(Level.LOW),
        near_function=_near_function(f, th),
        strong=f.power >= th.strong_alone,
        present=f.presence >= th.presence_power,
        lookup=f.lookup,
        fellow=f.fellow,
    )


Condition = Callable[[Facts], bool]


@dataclass(frozen=True)
class Rule:
    """One named rule: the level it sets when its condition holds, the figure it shows
    (``power``, ``share``, ``determinism`` or ``match``) and its sentence (a template over
    ``txt``, ``share``, ``determinism``, ``others``, ``lift``)."""

    name: str
    level: Level
    when: Condition
    shows: str
    says: str
    needs_peers: bool = True  # capped at medium when too few peers to compare with


def _share_held(x: Facts, level: Level) -> bool:
    return x.share_level == level and x.stands_out and x.told


def _function_eligible(x: Facts) -> bool:
    """A near-function of the target; one at high only yields to a share held at critical."""
    critical = x.near_function == Level.CRITICAL
    return critical or (x.near_function == Level.HIGH and not _share_held(x, Level.CRITICAL))


def _function_keeps(x: Facts) -> bool:
    """A near-function is a leak through what it adds: a large lift (or one not measured), or
    a share beyond the typical one that stands apart from the table's."""
    return x.lift in ("large", "unknown") or x.beyond_apart


_FUNCTION = (
    "is almost a function of the target: the target accounts for {determinism:.0%} of its "
    "entropy ({txt})"
)
_SHARE = "the target explains {share:.0%} of what the other columns leave unexplained in it ({txt})"
C, H, M, L, N = Level.CRITICAL, Level.HIGH, Level.MEDIUM, Level.LOW, Level.NONE

RULES: tuple[Rule, ...] = (
    Rule("target_function_of_column", M, lambda x: x.lookup,
         "power", "every value of it belongs to one class ({txt}): the target is a function of "
         "this column (a finer code of the same thing); nothing here says it was recorded "
         "after the outcome", False),
    Rule("deterministic_explained", H, lambda x: x.deterministic and x.explained, "power",
         "alone predicts the target almost exactly ({txt}), though its peers explain it", False),
    Rule("deterministic", C, lambda x: x.deterministic, "power",
         "alone predicts the target almost exactly ({txt})", False),
    Rule("function_no_lift", L, lambda x: _function_eligible(x) and x.lift == "nil", "power",
         _FUNCTION + ", yet it adds nothing to the other columns (unique lift {lift})", False),
    Rule("function_critical", C, lambda x: x.near_function == C and _function_keeps(x),
         "determinism", _FUNCTION, False),
    Rule("function_unmeasured_identity", H,
         lambda x: x.near_function == C and x.lift == "unmeasurable", "determinism",
         _FUNCTION + "; the other columns leave too little error to measure what it adds", False),
    Rule("function_high", H, lambda x: _function_eligible(x) and _function_keeps(x),
         "determinism", _FUNCTION, False),
    Rule("function_unmeasured", L, lambda x: _function_eligible(x) and x.lift == "unmeasurable",
         "power", _FUNCTION + ", but the other columns leave too little error to measure what "
         "it adds", False),
    Rule("function_some_lift", M, _function_eligible, "power",
         _FUNCTION + ", but it adds little to the other columns (unique lift {lift})", False),
    Rule("fellow_of_leak", H, lambda x: x.fellow and x.strong and x.lift == "large", "power",
         "{txt}; its peers explain it only through a near-perfect column found to leak, and "
         "without that column it adds much to the rest (unique lift {lift})"),
    Rule("no_lift", M, lambda x: x.lift == "nil" and (
        x.share_level >= H and x.stands_out and x.told or x.calibrated or x.matches),
         "power", "{txt}; it adds nothing to the other columns (unique lift {lift})"),
    Rule("share_critical", C, lambda x: _share_held(x, C), "share",
         _SHARE + ": it looks caused by the outcome"),
    Rule("share_high", H, lambda x: _share_held(x, H), "share",
         _SHARE + ": it looks caused by the outcome"),
    Rule("share_calibrated", H, lambda x: x.calibrated, "power",
         _SHARE + ", far above the table's other columns: it looks caused by the outcome"),
    Rule("match", H, lambda x: x.matches, "match",
         "alone ({txt}) matches all the other columns together ({others:.3f})"),
    Rule("presence", H, lambda x: x.present and x.lift == "large", "power",
         "one value or the missing values alone tell the classes apart ({txt}), and it adds "
         "much to the other columns (unique lift {lift})"),
    Rule("share_typical", M, lambda x: x.share_level >= H and not x.stands_out, "power",
         _SHARE + ", but other columns of this table show shares as large"),
    Rule("share_explained_beyond", M, lambda x: x.share_level >= H and not x.effect_like,
         "share", _SHARE + ", but the other columns explain it beyond the target, as they "
         "would an honest feature"),
    Rule("share_untellable", M, lambda x: x.share_level >= H, "share",
         _SHARE + ", but the other columns say too little about the target to tell an effect "
         "of the outcome from a strong cause"),
    Rule("share_medium", M, lambda x: x.share_level == M, "share",
         _SHARE + ": it may be caused by the outcome"),
    Rule("share_low", L, lambda x: x.share_level == L, "share", _SHARE),
    Rule("strong", L, lambda x: x.strong, "power",
         "{txt}; the target adds {share:.0%} beyond its peers, so it is explained by other "
         "columns"),
    Rule("explained", N, lambda x: True, "power", "{txt}; the target adds {share:.0%} beyond its "
         "peers"),
)  # fmt: skip


@dataclass(frozen=True)
class Cap:
    """A ceiling on the level when the evidence cannot carry more."""

    name: str
    ceiling: Level
    when: Callable[[Facts, Rule], bool]


CAPS: tuple[Cap, ...] = (
    Cap("small_sample", Level.MEDIUM, lambda x, r: x.f.small),
    Cap("few_peers", Level.MEDIUM, lambda x, r: r.needs_peers and not x.enough_peers),
)


def decide(x: Facts, rules: tuple[Rule, ...] = RULES) -> tuple[Level, Rule]:
    """The first rule that holds, its level lowered by every cap that applies."""
    rule = next(r for r in rules if r.when(x))
    level = rule.level
    for cap in CAPS:
        if cap.when(x, rule):
            level = min(level, cap.ceiling)
    return level, rule
