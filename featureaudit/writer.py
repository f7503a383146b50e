"""Write a report as one unit: every file goes into a fresh folder beside ``out``, then the
folder is swapped in, so a failure or an interrupt leaves the whole old report or the whole new.

When ``out`` holds files of its own (say, ``--out .``), the report files are moved in one by
one instead, with the old ones kept aside until all are in place and put back on a failure.
Signals are held during the swap so that it cannot be cut in half.
"""

from __future__ import annotations

import os
import shutil
import signal
import tempfile
from collections.abc import Iterator
from contextlib import contextmanager
from pathlib import Path

from featureaudit.errors import InputFileError

__all__ = ["write_files", "swapped"]

_SIGNALS = {signal.SIGINT, signal.SIGTERM}
swapped: list[Path] = []  # report folders replaced by this process (the CLI's interrupt line)


def write_files(out_dir: str | os.PathLike[str], files: dict[str, str]) -> list[Path]:
    """Write ``{name: text}`` as the report in ``out_dir``; a failure leaves it as it was.

    A symbolic link is followed: the report is swapped in at the folder it points to, and
    the link itself stays as it was.
    """
    given = Path(out_dir)
    out = Path(os.path.realpath(given)) if given.is_symlink() else given
    if out.exists() and not out.is_dir():
        raise InputFileError(
            f"output folder {str(out)!r} is a file; pass --out with a folder (new or an "
            "earlier report)."
        )
    parent = out.absolute().parent
    try:
        parent.mkdir(parents=True, exist_ok=True)
        stage = Path(tempfile.mkdtemp(prefix=f".{out.name}.new-", dir=parent))
    except OSError as exc:
        raise _cannot(out, exc) from exc
    try:
        for name, text in files.items():
            with open(stage / name, "w", encoding="utf-8", newline="\n") as fh:
                fh.write(text)
                fh.flush()
                os.fsync(fh.fileno())
            os.chmod(stage / name, 0o644)
        os.chmod(stage, 0o755)
        own = out.is_dir() and any(p.name not in files for p in out.iterdir())
        with _signals_held():
            if own:
                _move_files_in(stage, out, list(files))
            else:
                _swap_folder(stage, out)
            swapped.append(out)
    except OSError as exc:
        raise _cannot(out, exc) from exc
    finally:
        shutil.rmtree(stage, ignore_errors=True)
    return [given / name for name in files]


def _swap_folder(stage: Path, out: Path) -> None:
    """Rename ``stage`` to ``out``; an earlier ``out`` is renamed aside first, removed after."""
    if not out.exists():
        os.rename(stage, out)
        return
    old = Path(tempfile.mkdtemp(prefix=f".{out.name}.old-", dir=out.absolute().parent))
    os.rmdir(old)
    os.rename(out, old)
    try:
        os.rename(stage, out)
    except OSError:
        os.rename(old, out)  # the earlier report goes back where it was
        raise
    shutil.rmtree(old, ignore_errors=True)


def _move_files_in(stage: Path, out: Path, names: list[str]) -> None:
    """Replace the report files inside a folder that holds other files; all or none."""
    keep = stage / ".old"
    keep.mkdir()
    moved: list[str] = []
    try:
        for name in names:
            if (out / name).exists():
                os.link(out / name, keep / name)
        for name in names:
            os.replace(stage / name, out / name)
            moved.append(name)
    except OSError:
        for name in moved:
            if (keep / name).exists():
                os.replace(keep / name, out / name)
            else:
                (out / name).unlink(missing_ok=True)
        raise


@contextmanager
def _signals_held() -> Iterator[None]:
    """Hold SIGINT and SIGTERM until the block ends (they are delivered after it)."""
    previous = signal.pthread_sigmask(signal.SIG_BLOCK, _SIGNALS)
    try:
        yield
    finally:
        signal.pthread_sigmask(signal.SIG_SETMASK, previous)


def _cannot(out: Path, exc: OSError) -> InputFileError:
    return InputFileError(
        f"cannot write the report into {str(out)!r}: {exc.strerror or exc}; the earlier "
        "report is unchanged. Pass --out with a folder you can write to."
    )
