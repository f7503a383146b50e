"""A live progress display on stderr for long passes, only when stderr is a terminal."""

from __future__ import annotations

import sys
from collections.abc import Callable, Iterator
from contextlib import contextmanager

__all__ = ["row_progress", "showing"]


def showing(progress: bool | None) -> bool:
    """Show progress? ``None`` means: when stderr is a terminal; False is ``--quiet``."""
    return sys.stderr.isatty() if progress is None else progress


@contextmanager
def row_progress(total_rows: int, show: bool) -> Iterator[Callable[[str, int], None]]:
    """Yield ``tick(pass_name, rows_done)``: a rich bar per pass (rows done, elapsed and
    remaining time) on stderr when ``show``, otherwise a function that does nothing."""
    if not show:
        yield lambda name, rows: None
        return
    from rich.console import Console
    from rich.progress import (
        BarColumn,
        MofNCompleteColumn,
        Progress,
        TaskID,
        TextColumn,
        TimeElapsedColumn,
        TimeRemainingColumn,
    )

    bars: dict[str, TaskID] = {}
    with Progress(
        TextColumn("{task.description}"),
        BarColumn(),
        MofNCompleteColumn(),
        TextColumn("rows"),
        TimeElapsedColumn(),
        TimeRemainingColumn(),
        console=Console(stderr=True),
        transient=False,
    ) as bar:

        def tick(name: str, rows: int) -> None:
            if name not in bars:
                bars[name] = bar.add_task(name, total=total_rows)
            bar.advance(bars[name], rows)

        yield tick
