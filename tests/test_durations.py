"""Durations as people write them, and a clear error for anything else."""

import pandas as pd
import pytest

from featureaudit.errors import DurationError
from featureaudit.load.durations import parse_duration


@pytest.mark.parametrize(
    "text, expected",
    [
        ("30d", pd.Timedelta(days=30)),
        ("30D", pd.Timedelta(days=30)),
        ("30 days", pd.Timedelta(days=30)),
        ("-30d", pd.Timedelta(days=-30)),
        ("+2 days", pd.Timedelta(days=2)),
        ("12h", pd.Timedelta(hours=12)),
        ("P30D", pd.Timedelta(days=30)),
        ("-P30D", pd.Timedelta(days=-30)),
        ("P1DT12H", pd.Timedelta(hours=36)),
        ("0d", pd.Timedelta(0)),
        ("2 weeks", pd.Timedelta(days=14)),
        ("90 minutes", pd.Timedelta(minutes=90)),
    ],
)
def test_accepted_spellings(text, expected):
    # reference: pandas.Timedelta built from explicit keyword units
    assert parse_duration(text) == expected


@pytest.mark.parametrize("text", ["", "soon", "30", "30 fortnights", "P", "P1M", "d30", "--3d"])
def test_rejected_spellings_name_the_value(text):
    with pytest.raises(DurationError, match="duration"):
        parse_duration(text)


def test_no_pandas_deprecation_warning(recwarn):
    parse_duration("7d")
    assert not [w for w in recwarn if issubclass(w.category, (FutureWarning, DeprecationWarning))]
