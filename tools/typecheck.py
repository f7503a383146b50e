"""Type-check the package as it is installed: ``probes/`` and ``reports/`` mapped into
``featureaudit`` (as pyproject's package-dir maps them), so mypy follows every
``featureaudit.probes`` import instead of skipping it as missing.

The mapped tree is a folder of symbolic links to the source files, made afresh in a temporary
folder; mypy's messages name the source files. Run: ``python tools/typecheck.py``.
"""

from __future__ import annotations

import os
import subprocess
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
MAPPED = {"featureaudit": "featureaudit", "featureaudit/probes": "probes"}


def link_tree(into: Path) -> None:
    """``into/featureaudit`` holds a link to every ``.py`` file of the mapped package."""
    for target, source in MAPPED.items():
        for path in (ROOT / source).rglob("*.py"):
            link = into / target / path.relative_to(ROOT / source)
            link.parent.mkdir(parents=True, exist_ok=True)
            link.symlink_to(path)


def main() -> int:
    with tempfile.TemporaryDirectory(prefix="featureaudit-types-") as tmp:
        link_tree(Path(tmp))
        command = [
            sys.executable,
            "-m",
            "mypy",
            "--config-file",
            str(ROOT / "pyproject.toml"),
            "-p",
            "featureaudit",
        ]
        done = subprocess.run(command, cwd=tmp, capture_output=True, text=True)
        # name the source files, not the links
        said = done.stdout.replace(f"{tmp}{os.sep}", "").replace(tmp, "")
        sys.stdout.write(said.replace("featureaudit/probes/", "probes/"))
        sys.stderr.write(done.stderr)
        return done.returncode


if __name__ == "__main__":
    sys.exit(main())
