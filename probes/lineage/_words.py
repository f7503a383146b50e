"""The sentences of the lineage probe's evidence: what a reviewer checks in a minute."""

from __future__ import annotations

from featureaudit.probes.lineage._groups import GroupFigures
from featureaudit.probes.lineage._scaled import ScaleFigures
from featureaudit.probes.lineage._windows import WindowFigures

__all__ = ["window_sentence", "group_sentence", "scale_sentence"]


def window_sentence(f: WindowFigures, target: str, order: str) -> str:
    w = f.later
    if w.width == 1 and w.end > 0:
        why = f"a lead posing as a lag: period t{w.end:+d} comes after the row's label"
    elif w.holds_label:
        why = "the window includes the row's own label (period t)"
    else:
        why = f"the window reaches period t{w.end:+d}, after the row's label"
    before = (
        f"the best window ending before the row ({f.earlier.words()}) reaches r² "
        f"{1 - f.u_earlier:.4f}"
        if f.earlier is not None
        else "no window ending before the row could be measured"
    )
    return (
        f"equals the {w.words()} of target {target!r} (r² {1 - f.u_later:.4f} over {f.rows} "
        f"rows, ordered by {order}): {why}; {before}"
    )


def honest_window_sentence(f: WindowFigures, target: str) -> str:
    assert f.earlier is not None
    return (
        f"matches the {f.earlier.words()} of target {target!r} (r² {1 - f.u_earlier:.4f}), "
        "a window that ends before the row's label: computed from earlier rows"
    )


def group_sentence(f: GroupFigures, group: str, target: str, variant_words: str) -> str:
    means = ", ".join(f"{k} {v:g}" for k, v in f.means.items())
    shrink = f", shrunk toward the overall mean with weight {f.shrink:g}" if f.shrink else ""
    where = (
        "over all labelled rows, held-out rows included"
        if f.scope == "all labelled rows"
        else "over the training rows"
    )
    if f.variant == "varies":
        return (
            f"varies within the groups of {group!r} yet its group averages track the groups' "
            f"mean {target!r} (r² {1 - f.u_fit:.3f} over {f.groups} groups): a cross-fitted "
            "encoding, each row's value computed without its own fold"
        )
    head = (
        f"equals the mean {target!r} of its group in {group!r} {where}{shrink} "
        f"(r² {1 - f.u_fit:.4f} over {f.groups} groups; e.g. {means})"
    )
    if f.variant == "leave_one_out":
        return head.replace("mean", "leave-one-out mean", 1) + f": {variant_words}"
    return (
        f"{head}: {variant_words}; the means of a content-chosen half of the rows explain "
        f"r² {1 - f.u_half:.4f}"
    )


def scale_sentence(f: ScaleFigures, entity: str, order: str) -> str:
    share = f"mean 0 and SD 1 within {f.holds_all:.0%} of {f.entities} entities over all rows"
    if f.split:
        return (
            f"standardised within each {entity!r} over all its periods, held-out periods "
            f"included ({share}, over the training rows in {f.holds_train:.0%}); "
            f"re-standardised on each entity's training rows its values move by "
            f"{f.shift:.3g} on average"
        )
    return (
        f"standardised within each {entity!r} over its whole history ({share}, ordered by "
        f"{order}): each row was scaled with its entity's later periods"
    )
