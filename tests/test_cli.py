"""The command line: exit codes 0, 1 and 2, the report files, droplist, diff, dictionary, demo."""

import json
import os

import numpy as np
import pandas as pd
import pytest
from typer.testing import CliRunner

from featureaudit.cli import app
from featureaudit.judge.findings import SCHEMA

runner = CliRunner()


def run(*args):
    return runner.invoke(app, [str(a) for a in args], prog_name="featureaudit")


@pytest.fixture(scope="module")
def leaky_csv(tmp_path_factory):
    rng = np.random.default_rng(0)
    n = 1500
    y = rng.integers(0, 2, n)
    frame = pd.DataFrame({f"f{i}": rng.normal(size=n) + 0.4 * y for i in range(5)})
    frame["closed_code"] = np.where(rng.random(n) < 0.97, y, 1 - y)
    frame["split"] = np.where(rng.random(n) < 0.8, "train", "test")
    frame["y"] = y
    path = tmp_path_factory.mktemp("data") / "leaky.csv"
    frame.to_csv(path, index=False)
    return path


@pytest.fixture(scope="module")
def report(leaky_csv, tmp_path_factory):
    out = tmp_path_factory.mktemp("report")
    result = run("scan", leaky_csv, "--target", "y", "--split-column", "split", "--out", out)
    assert result.exit_code == 0, result.stderr
    return out


def test_scan_writes_the_five_files(report):
    assert sorted(p.name for p in report.iterdir()) == [
        "dossier.html",
        "droplist.txt",
        "findings.json",
        "findings.sarif",
        "summary.md",
    ]
    doc = json.loads((report / "findings.json").read_text())
    assert doc["schema"] == SCHEMA
    assert doc["dataset"]["train_rows"] + doc["dataset"]["heldout_rows"] == doc["dataset"]["rows"]
    assert doc["dataset"]["split"] == "column:split" and doc["dataset"]["task"] == "binary"
    assert (report / "droplist.txt").read_text().splitlines()[0] == "closed_code"
    scores = [c["score"] for c in doc["columns"]]
    assert scores == sorted(scores, reverse=True)
    for key in (
        "schema",
        "tool_version",
        "created",
        "dataset",
        "settings",
        "columns",
        "dataset_findings",
        "skipped",
        "warnings",
    ):
        assert key in doc


def test_fail_at_exits_1_when_reached(leaky_csv, tmp_path):
    result = run("scan", leaky_csv, "--target", "y", "--out", tmp_path, "--fail-at", "high")
    assert result.exit_code == 1
    assert (tmp_path / "findings.json").exists()


def test_fail_at_not_reached_exits_0(tmp_path):
    rng = np.random.default_rng(1)
    frame = pd.DataFrame(
        {"a": rng.normal(size=400), "b": rng.normal(size=400), "y": rng.integers(0, 2, 400)}
    )
    frame.to_csv(tmp_path / "clean.csv", index=False)
    result = run(
        "scan",
        tmp_path / "clean.csv",
        "--target",
        "y",
        "--out",
        tmp_path / "r",
        "--fail-at",
        "high",
    )
    assert result.exit_code == 0, result.stdout + result.stderr


def test_bad_flag_value_exits_2_with_one_line(leaky_csv, tmp_path):
    result = run("scan", leaky_csv, "--target", "nope", "--out", tmp_path)
    assert result.exit_code == 2
    assert result.stderr.count("\n") == 1 and "'nope'" in result.stderr
    assert "--target" in result.stderr and "Traceback" not in result.stderr


def test_unknown_option_exits_2_with_one_line(leaky_csv):
    result = run("scan", leaky_csv, "--no-such-flag")
    assert result.exit_code == 2 and result.stderr.count("\n") == 1
    assert "--no-such-flag" in result.stderr


def test_failed_run_leaves_the_earlier_report_untouched(leaky_csv, report, tmp_path):
    before = {p.name: p.read_bytes() for p in report.iterdir()}
    result = run("scan", leaky_csv, "--target", "y", "--task", "bogus", "--out", report)
    assert result.exit_code == 2
    assert {p.name: p.read_bytes() for p in report.iterdir()} == before


def test_droplist_command(report):
    text = run("droplist", report / "findings.json")
    assert text.exit_code == 0 and text.stdout.splitlines()[0] == "closed_code"
    as_json = run("droplist", report / "findings.json", "--format", "json", "--at-least", "none")
    names = json.loads(as_json.stdout)
    assert names[0] == "closed_code" and len(names) == 6
    assert run("droplist", report / "findings.json", "--at-least", "severe").exit_code == 2


def test_diff_command(report, tmp_path):
    doc = json.loads((report / "findings.json").read_text())
    old = json.loads(json.dumps(doc))
    old["columns"] = [c for c in old["columns"] if c["column"] != "closed_code"]
    old["columns"][0]["level"] = "critical"
    (tmp_path / "old.json").write_text(json.dumps(old))
    result = run("diff", tmp_path / "old.json", report / "findings.json")
    assert result.exit_code == 0
    assert any(
        line.startswith("new") and "closed_code" in line for line in result.stdout.splitlines()
    )
    assert any(line.startswith("lowered") for line in result.stdout.splitlines())
    failing = run("diff", tmp_path / "old.json", report / "findings.json", "--fail-at", "high")
    assert failing.exit_code == 1
    same = run("diff", report / "findings.json", report / "findings.json", "--fail-at", "low")
    assert same.exit_code == 0 and "no change" in same.stdout


def test_dictionary_command(leaky_csv):
    result = run("dictionary", leaky_csv, "--target", "y")
    assert result.exit_code == 0
    lines = result.stdout.strip().splitlines()
    assert lines[0] == "column,role,known_at,description,suggestion"
    assert "y,target,,," in lines and "split,split,,," in lines


def test_config_file_supplies_flags_and_flags_win(leaky_csv, tmp_path):
    cfg = tmp_path / "audit.toml"
    cfg.write_text('target = "y"\nsplit_column = "split"\nfail_at = "critical"\nseed = 4\n')
    result = run("scan", leaky_csv, "--config", cfg, "--out", tmp_path / "r", "--fail-at", "high")
    assert result.exit_code == 1
    doc = json.loads((tmp_path / "r" / "findings.json").read_text())
    assert doc["settings"]["seed"] == 4 and doc["dataset"]["split"] == "column:split"
    cfg.write_text('target = "y"\ncolour = "blue"\n')
    bad = run("scan", leaky_csv, "--config", cfg)
    assert bad.exit_code == 2 and "colour" in bad.stderr


def test_demo_runs_end_to_end(tmp_path):
    cwd = os.getcwd()
    result = run("demo", "--out", tmp_path / "demo")
    assert os.getcwd() == cwd
    assert result.exit_code == 0, result.stderr
    assert "dossier" in result.stdout and (tmp_path / "demo" / "dossier.html").exists()
    drops = (tmp_path / "demo" / "droplist.txt").read_text().splitlines()
    assert {"reminders_sent", "in_collections"} <= set(drops)


def test_every_command_has_an_example_in_its_help():
    for command in ("scan", "droplist", "diff", "dictionary", "demo"):
        result = run(command, "--help")
        assert result.exit_code == 0 and "Example: featureaudit " + command in " ".join(
            result.stdout.split()
        ), command


def test_dictionary_warnings_reach_stderr(leaky_csv, tmp_path):
    d = tmp_path / "d.csv"
    d.write_text("column,role\nghost,feature\ny,target\n")
    result = run("scan", leaky_csv, "--dictionary", d, "--out", tmp_path / "r")
    assert result.exit_code == 0
    assert "warning" in result.stderr and "'ghost'" in result.stderr


def test_config_settings_and_their_validation(leaky_csv, tmp_path):
    cfg = tmp_path / "s.toml"
    cfg.write_text('target = "y"\nbins = 12\nfolds = 4\ntime_tolerance = "2d"\n')
    result = run("scan", leaky_csv, "--config", cfg, "--out", tmp_path / "r")
    assert result.exit_code == 0, result.stderr
    settings = json.loads((tmp_path / "r" / "findings.json").read_text())["settings"]
    assert (settings["bins"], settings["folds"], settings["time_tolerance"]) == (12, 4, "2d")
    cfg.write_text('target = "y"\nbins = 1\n')
    assert_bad = run("scan", leaky_csv, "--config", cfg, "--out", tmp_path / "r2")
    assert assert_bad.exit_code == 2 and "bins" in assert_bad.stderr
    cfg.write_text('target = "y"\ntime_tolerance = "soon"\n')
    bad = run("scan", leaky_csv, "--config", cfg, "--out", tmp_path / "r3")
    assert bad.exit_code == 2 and "time_tolerance" in bad.stderr
    cfg.write_text('target = "y"\nbins = "many"\n')
    bad = run("scan", leaky_csv, "--config", cfg, "--out", tmp_path / "r4")
    assert bad.exit_code == 2 and bad.stderr.count("\n") == 1


def test_scan_with_a_heldout_file_and_a_horizon(tmp_path):
    rng = np.random.default_rng(3)
    n = 600
    frame = pd.DataFrame(
        {
            "x": rng.normal(size=n),
            "w": rng.normal(size=n),
            "decided": pd.date_range("2024-01-01", periods=n, freq="D"),
            "y": rng.integers(0, 2, n),
        }
    )
    frame.iloc[:480].to_csv(tmp_path / "train.csv", index=False)
    frame.iloc[480:].drop(columns="y").to_parquet(tmp_path / "later.parquet")
    result = run(
        "scan",
        tmp_path / "train.csv",
        "--test",
        tmp_path / "later.parquet",
        "--target",
        "y",
        "--label-time",
        "decided",
        "--horizon",
        "30 days",
        "--out",
        tmp_path / "r",
    )
    assert result.exit_code == 0, result.stderr
    doc = json.loads((tmp_path / "r" / "findings.json").read_text())
    assert doc["dataset"]["split"] == "test:later.parquet"
    assert doc["dataset"]["heldout_rows"] == 120 and doc["dataset"]["cutoff"] == "horizon:30 days"
    overlap = [f for f in doc["dataset_findings"] if f["kind"] == "time_overlap_across_split"]
    assert overlap and overlap[0]["level"] == "none"


def test_a_probe_that_fails_fails_the_run_with_exit_3_and_keeps_the_report(leaky_csv, report):
    # A probe that raises is a bug: the contract's exit 3, one line, the earlier report kept.
    from dataclasses import dataclass

    from featureaudit.kit.registry import Probe, register, unregister

    @dataclass(frozen=True)
    class NoNumbers:
        """No thresholds."""

    @register
    class Broken(Probe):
        """A probe that always raises, to stand for a bug in a real probe."""

        name = "broken_for_test"
        kinds = ("target_proxy",)
        thresholds = NoNumbers()

        @classmethod
        def describe(cls, settings):
            return "Always raises."

        def run(self, table, settings):
            raise ZeroDivisionError("planted bug")

    before = {p.name: p.read_bytes() for p in report.iterdir()}
    try:
        result = run(
            "scan",
            leaky_csv,
            "--target",
            "y",
            "--split-column",
            "split",
            "--out",
            report,
            "--fail-at",
            "critical",
        )
    finally:
        unregister("broken_for_test")
    assert result.exit_code == 3, result.stderr
    assert result.stderr.count("\n") == 1 and "broken_for_test" in result.stderr
    assert {p.name: p.read_bytes() for p in report.iterdir()} == before


def test_a_heldout_file_with_no_rows_exits_2(leaky_csv, tmp_path):
    empty = tmp_path / "empty_test.csv"
    pd.read_csv(leaky_csv).drop(columns=["split"]).head(0).to_csv(empty, index=False)
    train = tmp_path / "train.csv"
    pd.read_csv(leaky_csv).drop(columns=["split"]).to_csv(train, index=False)
    result = run("scan", train, "--target", "y", "--test", empty, "--out", tmp_path / "r")
    assert result.exit_code == 2 and result.stderr.count("\n") == 1
    assert "empty_test.csv" in result.stderr and "no rows" in result.stderr
    assert not (tmp_path / "r").exists()


# --- commands, help and version (issue 11 item 8) ----------------------------------------
def test_no_command_is_one_line_exit_2():
    result = run()
    assert result.exit_code == 2 and result.stderr.count("\n") == 1
    assert "no command given" in result.stderr and "scan" in result.stderr


@pytest.mark.parametrize("flag", ["-h", "--help"])
def test_short_and_long_help(flag):
    for args in ([flag], ["scan", flag]):
        result = run(*args)
        assert result.exit_code == 0 and "Usage:" in result.stdout, result.stderr


def test_version_flag_and_command_agree():
    from featureaudit import __version__

    assert run("--version").stdout.strip() == __version__ == run("version").stdout.strip()


# --- interrupts (issue 11 item 3) --------------------------------------------------------
def _default_signals():
    import signal

    for sig in (signal.SIGINT, signal.SIGTERM):
        signal.signal(sig, signal.SIG_DFL)


def test_signals_at_any_moment_leave_one_whole_report(leaky_csv, tmp_path):
    """SIGINT/SIGTERM during imports, the audit or the write: exit 130/143, one line, and
    the earlier report (or, after the swap, the new one) whole, with nothing left beside it."""
    import signal
    import subprocess
    import sys
    import time

    exe = [sys.executable, "-c", "import sys; from featureaudit.cli import main; main()"]
    out = tmp_path / "r"
    out.mkdir()
    earlier = {n: f"earlier {n}" for n in ("dossier.html", "findings.json", "droplist.txt")}
    for name, text in earlier.items():
        (out / name).write_text(text)
    plan = [(0.0, signal.SIGINT), (0.1, signal.SIGTERM), (0.3, signal.SIGINT)]
    plan += [(1.0, signal.SIGTERM), (2.5, signal.SIGINT), (5.0, signal.SIGTERM)]
    handled = 0
    for delay, sig in plan:
        proc = subprocess.Popen(
            [*exe, "scan", str(leaky_csv), "--target", "y", "--out", str(out)],
            stdout=subprocess.PIPE,
            stderr=subprocess.PIPE,
            text=True,
            preexec_fn=_default_signals,  # a shell's `&` would leave SIGINT ignored
            # away from the source tree: `-c` puts the working folder first on sys.path, and
            # the source's featureaudit/ lacks the probes that the installed package holds
            cwd=tmp_path.parent,
        )
        time.sleep(delay)
        proc.send_signal(sig)
        _, err = proc.communicate(timeout=120)
        files = {p.name: p.read_text() for p in out.iterdir()}
        if "Traceback" in err:  # Python's own start-up (site, .pth files) ran, not ours yet
            assert "featureaudit" not in err and files == earlier, (delay, err)
            continue
        files = {p.name: p.read_text() for p in out.iterdir()}
        assert [p.name for p in tmp_path.iterdir()] == ["r"], (delay, list(tmp_path.iterdir()))
        if proc.returncode == 0:  # finished before the signal: the new report, whole
            assert sorted(files) == [
                "dossier.html",
                "droplist.txt",
                "findings.json",
                "findings.sarif",
                "summary.md",
            ]
            json.loads(files["findings.json"])
            continue
        if proc.returncode == -sig:  # before Python ran any of ours, or while it shut down
            # after a finished run (the interpreter restores the default handlers at exit):
            # killed silently, with the earlier report or the new one, each whole
            whole = sorted(files) == [
                "dossier.html",
                "droplist.txt",
                "findings.json",
                "findings.sarif",
                "summary.md",
            ]
            assert err == "" and (files == earlier or whole), (delay, err)
            continue
        assert proc.returncode == 128 + sig, (delay, proc.returncode, err)
        assert err.count("\n") == 1 and "featureaudit: interrupted; the " in err, err
        handled += 1
        if "earlier report" in err:
            assert files == earlier, delay
            assert f"the earlier report in {out} is unchanged" in err
        else:
            assert sorted(files) == [
                "dossier.html",
                "droplist.txt",
                "findings.json",
                "findings.sarif",
                "summary.md",
            ]
    assert handled >= 3, "too few runs were interrupted inside featureaudit to test anything"


# --- the inputs, declared once (issue 9 item 3) ------------------------------------------
def test_inputs_are_declared_once_and_every_door_takes_the_same():
    """audit(), scan and the config keys name exactly the fields of featureaudit.load.inputs."""
    import inspect

    from featureaudit.api import audit
    from featureaudit.cli import scan
    from featureaudit.load.inputs import input_specs
    from featureaudit.load.settings import Settings, config_keys

    specs = input_specs()
    table_inputs = {s.name for s in specs if not s.scan_only}
    # audit() also takes two settings as arguments (engine, sample_rows) and a progress switch
    api_only = {"data", "seed", "probes", "settings", "engine", "sample_rows", "progress"}
    assert set(inspect.signature(audit).parameters) - api_only == table_inputs
    flags = set(inspect.signature(scan).parameters) - {"table", "config", "seed"}
    flags -= {"engine", "sample_rows"}  # settings that scan takes as flags
    assert flags == {s.name for s in specs} - {"source"}
    assert all(s.flag == "--" + s.name.replace("_", "-") for s in specs if s.name in flags)
    assert set(config_keys()) == {s.name for s in specs} | set(Settings.names())
