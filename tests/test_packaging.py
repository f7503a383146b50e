"""The wheel holds exactly one import name, with probes, templates and the demo data inside."""

import subprocess
import sys
import zipfile
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]


@pytest.fixture(scope="module")
def wheel(tmp_path_factory):
    out = tmp_path_factory.mktemp("wheel")
    subprocess.run(
        [sys.executable, "-m", "pip", "wheel", "--no-deps", "-q", "-w", str(out), str(ROOT)],
        check=True,
        capture_output=True,
    )
    return next(out.glob("featureaudit-*.whl"))


def test_wheel_has_one_top_level_package(wheel):
    names = zipfile.ZipFile(wheel).namelist()
    tops = {n.split("/")[0] for n in names if not n.split("/")[0].endswith(".dist-info")}
    assert tops == {"featureaudit"}
    for needed in (
        "featureaudit/probes/solo/__init__.py",
        "featureaudit/probes/solo/_peers.py",
        "featureaudit/probes/twins/_nearcopy.py",
        "featureaudit/hashing.py",
        "featureaudit/reports/templates/dossier.html.j2",
        "featureaudit/sample_data/invoices.csv",
        "featureaudit/sample_data/dictionary.csv",
    ):
        assert needed in names, needed
    assert not [n for n in names if n.startswith("probes/")]


def test_wheel_holds_every_module_of_the_source_tree(wheel):
    """Every .py file of featureaudit/ and probes/ is in the wheel (a missed subpackage would
    install a tool that fails on first use)."""
    names = set(zipfile.ZipFile(wheel).namelist())
    expected = {
        f"featureaudit/{p.relative_to(ROOT / 'featureaudit')}"
        for p in (ROOT / "featureaudit").rglob("*.py")
    }
    expected |= {
        f"featureaudit/probes/{p.relative_to(ROOT / 'probes')}"
        for p in (ROOT / "probes").rglob("*.py")
    }
    missing = sorted(n for n in expected if "__pycache__" not in n and n not in names)
    assert not missing, missing


def test_the_gates_are_pinned_once():
    """ruff and mypy are pinned in .ci/tools.txt; pre-commit pins ruff at the same version."""
    root = Path(__file__).resolve().parents[1]
    pins = dict(
        line.split("==")
        for line in (root / ".ci" / "tools.txt").read_text().splitlines()
        if line and not line.startswith("#")
    )
    assert set(pins) == {"ruff", "mypy"}
    config = (root / ".pre-commit-config.yaml").read_text()
    assert config.count(f'"ruff=={pins["ruff"]}"') == 2
    assert "-r .ci/tools.txt" in (root / ".ci" / "run").read_text()
