"""Each rule of solo's target_proxy table alone: figures made by hand for which that rule is
the first that holds, with the level and name the table must give."""

import pytest

from featureaudit.levels import Level
from featureaudit.probes.solo import ProxyFigures, decide_proxy
from featureaudit.probes.solo._rules import CAPS, RULES, decide, facts

# a weak column its peers explain beyond the target: no rule but the last holds
BASE = dict(
    power=0.1,
    determinism=0.0,
    share=0.0,
    typical_share=0.0,
    others_power=0.5,
    peers_beyond_target=0.5,
    expected_r2_if_effect=0.0,
    n_peers=10,
)
EFFECT = dict(peers_beyond_target=0.05, expected_r2_if_effect=0.2)  # an effect the peers tell
NIL = dict(lift=0.01, lift_high=0.05, lift_error=0.1)
LARGE = dict(lift=0.8, lift_low=0.6, lift_error=0.1)
TINY_ERROR = dict(lift=0.5, lift_low=0.3, lift_error=0.001)

CASES = {
    "target_function_of_column": (Level.MEDIUM, dict(power=1.0, determinism=0.9, lookup=True)),
    "deterministic_explained": (Level.HIGH, dict(power=0.99)),
    "deterministic": (Level.CRITICAL, dict(power=0.99, peers_beyond_target=0.05)),
    "function_no_lift": (Level.LOW, dict(power=0.85, determinism=0.75, **NIL)),
    "function_critical": (Level.CRITICAL, dict(power=0.85, determinism=0.75)),
    "function_unmeasured_identity": (
        Level.HIGH,
        dict(power=0.85, determinism=0.75, **TINY_ERROR),
    ),
    "function_high": (Level.HIGH, dict(power=0.6, determinism=0.55)),
    "function_unmeasured": (Level.LOW, dict(power=0.6, determinism=0.55, **TINY_ERROR)),
    "function_some_lift": (
        Level.MEDIUM,
        dict(power=0.6, determinism=0.55, lift=0.2, lift_low=0.05, lift_error=0.1),
    ),
    "fellow_of_leak": (Level.HIGH, dict(power=0.9, fellow=True, **LARGE)),
    "no_lift": (Level.MEDIUM, dict(power=0.6, share=0.45, **EFFECT, **NIL)),
    "share_critical": (Level.CRITICAL, dict(power=0.6, share=0.45, **EFFECT)),
    "share_high": (Level.HIGH, dict(power=0.4, share=0.25, **EFFECT)),
    "share_calibrated": (Level.HIGH, dict(power=0.4, share=0.15, share_z=5.0, **EFFECT)),
    "match": (Level.HIGH, dict(power=0.7, others_power=0.7, **EFFECT)),
    "presence": (Level.HIGH, dict(power=0.5, presence=0.9, **LARGE)),
    "share_typical": (Level.MEDIUM, dict(power=0.4, share=0.25, share_z=1.0, **EFFECT)),
    "share_explained_beyond": (Level.MEDIUM, dict(power=0.4, share=0.25)),
    "share_untellable": (
        Level.MEDIUM,
        dict(power=0.4, share=0.25, peers_beyond_target=0.05),
    ),
    "share_medium": (Level.MEDIUM, dict(power=0.25, share=0.12)),
    "share_low": (Level.LOW, dict(power=0.15, share=0.06)),
    "strong": (Level.LOW, dict(power=0.85)),
    "explained": (Level.NONE, {}),
}


def test_every_rule_has_a_case_and_names_are_unique():
    names = [r.name for r in RULES]
    assert len(names) == len(set(names))
    assert set(names) == set(CASES)


@pytest.mark.parametrize("name", list(CASES))
def test_each_rule_alone(name):
    level, changes = CASES[name]
    f = ProxyFigures(**{**BASE, **changes})
    assert decide_proxy(f) == (level, name)
    rule = next(r for r in RULES if r.name == name)
    assert rule.level == level and rule.when(facts(f))
    # the rule's sentence fills with the figures it names
    assert rule.says.format(txt="AUC 0.9", share=0.1, determinism=0.5, others=0.9, lift="0.5")


def test_caps_lower_what_the_evidence_cannot_carry():
    assert [c.name for c in CAPS] == ["small_sample", "few_peers"]
    high = dict(power=0.4, share=0.25, **EFFECT)
    assert decide_proxy(ProxyFigures(**{**BASE, **high, "small": True})) == (
        Level.MEDIUM,
        "share_high",
    )
    # determinism and near-functions do not need peers; the share rules do not hold without
    assert decide_proxy(ProxyFigures(**{**BASE, "power": 0.99, "n_peers": 1}))[0] == Level.CRITICAL
    match = dict(power=0.9, fellow=True, **LARGE)
    level, rule = decide(facts(ProxyFigures(**{**BASE, **match, "n_peers": 1})))
    assert rule.name == "fellow_of_leak" and level == Level.MEDIUM


def test_class3_a_large_lift_beside_peers_that_tell_nothing_cannot_tell_cause_from_effect():
    # the share rule's figures of a strong cause among independent columns: the peers add
    # nothing beyond the target (they explain nothing at all), the lift is large
    cause = dict(power=0.85, share=0.5, peers_beyond_target=0.01, r2_target=0.6, **LARGE)
    assert decide_proxy(ProxyFigures(**{**BASE, **cause, "rest_power": 0.02})) == (
        Level.MEDIUM,
        "share_untellable",
    )
    # the same column where the rest of the table tells the target: an effect of it
    assert decide_proxy(ProxyFigures(**{**BASE, **cause, "rest_power": 0.8})) == (
        Level.CRITICAL,
        "share_critical",
    )


def test_the_first_matching_rule_wins():
    # a lookup that alone predicts the target exactly is medium, not critical
    f = ProxyFigures(**{**BASE, "power": 1.0, "determinism": 1.0, "lookup": True})
    assert [r.name for r in RULES if r.when(facts(f))][:2] == [
        "target_function_of_column",
        "deterministic_explained",
    ]
    assert decide_proxy(f) == (Level.MEDIUM, "target_function_of_column")
