"""The shipped CI job and pre-commit hook call commands and flags that exist, and the hook
fails a commit whose training code leaks."""

from __future__ import annotations

import re
import shlex
from pathlib import Path

from typer.testing import CliRunner

from featureaudit.cli import app

ROOT = Path(__file__).resolve().parents[1]
runner = CliRunner()


def test_pre_commit_hook_fails_on_leaky_code_and_passes_clean_code(tmp_path, monkeypatch):
    text = (ROOT / ".pre-commit-hooks.yaml").read_text()
    entry = re.search(r"^\s*entry:\s*(.+)$", text, re.M).group(1)
    assert re.search(r"^- id: featureaudit-code$", text, re.M)
    words = shlex.split(entry)
    assert words[0] == "featureaudit"
    monkeypatch.chdir(tmp_path)
    cases = ROOT / "tests" / "code_cases"
    leaky = runner.invoke(app, [*words[1:], str(cases / "models_leaky.py")])
    assert leaky.exit_code == 1, leaky.stdout
    assert (tmp_path / ".featureaudit" / "code-findings.json").is_file()
    clean = runner.invoke(app, [*words[1:], str(cases / "models_clean.py")])
    assert clean.exit_code == 0, clean.stdout


def test_ci_job_uses_flags_scan_has():
    text = (ROOT / "docs" / "ci" / "github-actions.yml").read_text()
    block = re.search(r"run: >\n((?:\s{10}.+\n)+)", text).group(1)
    words = shlex.split(" ".join(line.strip() for line in block.splitlines()))
    assert words[:2] == ["featureaudit", "scan"]
    flags = [w for w in words if w.startswith("--")]
    help_text = runner.invoke(app, ["scan", "--help"]).stdout
    for flag in flags:
        assert flag in help_text, flag
    assert "findings.sarif" in text and "summary.md" in text
