"""The --order input (dictionary role ``order``, config key ``order``, ``audit(order=...)``):
a sortable column that orders each entity's rows; unsortable values are one clear error."""

import json

import numpy as np
import pandas as pd
import pytest
from typer.testing import CliRunner

from featureaudit.cli import app
from featureaudit.errors import SettingError
from featureaudit.table import build_table

runner = CliRunner()


def _frame() -> pd.DataFrame:
    rng = np.random.default_rng(0)
    return pd.DataFrame(
        {
            "shop": np.repeat(["a", "b", "c", "d"], 30),
            "week": np.tile(np.arange(30), 4),
            "x": rng.normal(size=120),
            "y": rng.normal(size=120),
        }
    )


def _one_line_exit_2(result, *fragments):
    assert result.exit_code == 2, (result.exit_code, result.stdout, result.stderr)
    assert result.stderr.count("\n") == 1 and "Traceback" not in result.stderr, result.stderr
    for fragment in fragments:
        assert fragment in result.stderr, (fragment, result.stderr)


def test_order_flag_dictionary_role_and_config_key_agree(tmp_path):
    frame = _frame()
    by_flag = build_table(frame, target="y", order="week")
    dictionary = pd.DataFrame({"column": ["week"], "role": ["order"]})
    by_role = build_table(frame, target="y", dictionary=dictionary)
    for table in (by_flag, by_role):
        assert table.order_column == "week" and "week" not in table.features
        # reference: pandas.Series.rank(method="dense") of the week numbers
        expected = frame["week"].rank(method="dense").to_numpy()
        np.testing.assert_array_equal(table.order, expected)
    path = tmp_path / "t.csv"
    frame.to_csv(path, index=False)
    config = tmp_path / "c.toml"
    config.write_text('order = "week"\nentity = "shop"\ntarget = "y"\n')
    out = tmp_path / "out"
    result = runner.invoke(app, ["scan", str(path), "--config", str(config), "--out", str(out)])
    assert result.exit_code == 0, result.stderr
    doc = json.loads((out / "findings.json").read_text())
    assert doc["schema"] == "featureaudit.findings/3"
    assert "week" not in {c["column"] for c in doc["columns"]}


@pytest.mark.parametrize(
    ("values", "fragment"),
    [
        ([1, "two"] * 60, "do not sort together"),
        (["2024-01-01", "soon"] * 60, "mixes dates with other text"),
        ([None] * 120, "has no values"),
        ([True, False] * 60, "true/false"),
    ],
)
def test_unsortable_order_is_one_line_exit_2(tmp_path, values, fragment):
    frame = _frame()
    frame["period"] = pd.Series(values, dtype=object if values[0] is not True else bool)
    path = tmp_path / "t.csv"
    frame.to_csv(path, index=False)
    with pytest.raises(SettingError, match=fragment):
        build_table(frame, target="y", order="period")
    result = runner.invoke(app, ["scan", str(path), "--target", "y", "--order", "period"])
    _one_line_exit_2(result, "--order", "'period'")


def test_missing_order_column_names_the_flag(tmp_path):
    path = tmp_path / "t.csv"
    _frame().to_csv(path, index=False)
    result = runner.invoke(app, ["scan", str(path), "--target", "y", "--order", "nope"])
    _one_line_exit_2(result, "--order", "'nope'")


def test_text_periods_sort_as_numbers_dates_or_text():
    frame = _frame()
    frame["p"] = frame["week"].astype(str)  # "10" after "9", not before "2"
    np.testing.assert_array_equal(
        build_table(frame, target="y", order="p").order,
        frame["week"].rank(method="dense").to_numpy(),
    )
    frame["p"] = pd.Timestamp("2024-01-01") + pd.to_timedelta(frame["week"] * 7, unit="D")
    frame["p"] = frame["p"].dt.strftime("%Y-%m-%d")
    assert build_table(frame, target="y", order="p").order.max() == 30
    frame["p"] = [f"2024-W{w:02d}" for w in frame["week"]]
    assert build_table(frame, target="y", order="p").order.max() == 30
