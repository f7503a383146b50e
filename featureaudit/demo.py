"""``featureaudit demo``: the shipped invoice scenario, scanned end to end."""

from __future__ import annotations

from importlib import resources
from pathlib import Path

from featureaudit.api import AuditResult, audit

__all__ = ["run_demo", "demo_paths"]


def demo_paths() -> tuple[Path, Path]:
    """The demo table and its dictionary, from the installed package data."""
    base = resources.files("featureaudit.sample_data")
    return Path(str(base / "invoices.csv")), Path(str(base / "dictionary.csv"))


def run_demo(out: str | Path = "featureaudit-report", seed: int = 0) -> tuple[AuditResult, Path]:
    """Scan the demo table with its dictionary (which names target, split, times and entity)."""
    table, dictionary = demo_paths()
    result = audit(table, dictionary=dictionary, seed=seed)
    out_dir = Path(out)
    result.write(out_dir)
    return result, out_dir
