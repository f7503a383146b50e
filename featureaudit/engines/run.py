"""Run the stream or dask engine with its progress display (kept apart so the engine stays pure)."""

from __future__ import annotations

from typing import Any

from featureaudit.engines.stream import parquet_dataset, stream_audit
from featureaudit.judge.findings import Findings
from featureaudit.load.settings import Settings
from featureaudit.progress import row_progress, showing

__all__ = ["run_stream"]


def run_stream(
    data: Any,
    build: dict[str, Any],
    settings: Settings,
    probes: list[str] | None,
    progress: bool | None,
    engine: str = "stream",
    scheduler: str | None = None,
) -> Findings:
    """Run ``engine`` on ``data`` (two passes) with a live display on stderr when
    ``progress`` allows."""
    total = parquet_dataset(data).count_rows()
    with row_progress(total, showing(progress)) as tick:
        if engine == "dask":
            from featureaudit.engines.dask_engine import dask_audit

            return dask_audit(data, build, settings, probes, scheduler, tick)
        return stream_audit(data, build, settings, probes, tick)
