"""Write report files whole or not at all: every file is rendered first, then renamed in place."""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

from featureaudit.errors import InputFileError

__all__ = ["write_files"]


def write_files(out_dir: str | os.PathLike[str], files: dict[str, str]) -> list[Path]:
    """Write ``{name: text}`` into ``out_dir``; a failure leaves any earlier report untouched."""
    out = Path(out_dir)
    try:
        out.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise InputFileError(
            f"cannot create output folder {str(out)!r}: {exc.strerror}; pass "
            "--out with a folder you can write to."
        ) from exc
    temps: list[tuple[Path, Path]] = []
    try:
        for name, text in files.items():
            fd, tmp_name = tempfile.mkstemp(prefix=f".{name}.", suffix=".tmp", dir=out)
            with os.fdopen(fd, "w", encoding="utf-8", newline="\n") as fh:
                fh.write(text)
            os.chmod(tmp_name, 0o644)
            temps.append((Path(tmp_name), out / name))
    except OSError as exc:
        for written_tmp, _ in temps:
            written_tmp.unlink(missing_ok=True)
        raise InputFileError(
            f"cannot write the report into {str(out)!r}: {exc.strerror}; pass "
            "--out with a folder you can write to."
        ) from exc
    written = []
    for tmp_path, final in temps:
        os.replace(tmp_path, final)
        written.append(final)
    return written
