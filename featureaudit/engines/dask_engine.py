"""The ``dask`` engine: the stream engine's maps and merges as Dask tasks over the
partitions of ``dask.dataframe.read_parquet``, on a given scheduler or a local cluster.

The merged partials (counts and the sample) are gathered to the client; the copy hashes are
merged and counted on the workers, and only their counts come back. The probes run on the
client on the sample, as with the stream engine. Three passes: the stream engine's two and
its copy pass.
"""

from __future__ import annotations

import logging
import os
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from pathlib import Path
from typing import Any, TypeVar

import pandas as pd
import pyarrow as pa

from featureaudit.engines.partials import CopyPartial, Layout, copy_counts, exact_statistics
from featureaudit.engines.stream import (
    FirstPass,
    _report_engine,
    parquet_dataset,
    require_columns,
    sample_rows,
    stream_layout,
    whole_row_keys,
)
from featureaudit.errors import SettingError
from featureaudit.judge.findings import Findings
from featureaudit.kit.sample import SampleRows
from featureaudit.load.io import normalise_frame
from featureaudit.load.settings import Settings

__all__ = ["dask_audit"]

T = TypeVar("T")
# the level of Dask's own loggers in worker processes, read from the environment when they
# start (dask's config: distributed.logging.distributed)
_WORKER_LOGS = "DASK_DISTRIBUTED__LOGGING__DISTRIBUTED"


@contextmanager
def _quiet_cluster() -> Iterator[None]:
    """Keep Dask's log lines (a task cancelled, a nanny killing a worker on close) off
    stderr, which carries the run's one line; levels are put back afterwards."""
    logger = logging.getLogger("distributed")
    level, before = logger.level, os.environ.get(_WORKER_LOGS)
    logger.setLevel(logging.CRITICAL)
    os.environ[_WORKER_LOGS] = "critical"
    try:
        yield
    finally:
        logger.setLevel(level)
        if before is None:
            os.environ.pop(_WORKER_LOGS, None)
        else:
            os.environ[_WORKER_LOGS] = before


def _first(frame: pd.DataFrame, layout: Layout, settings: Settings) -> FirstPass:
    return FirstPass.map(pa.Table.from_pandas(frame, preserve_index=False), layout, settings)


def _rows(frame: pd.DataFrame, layout: Layout, settings: Settings, cut: dict) -> SampleRows:
    return sample_rows(pa.Table.from_pandas(frame, preserve_index=False), layout, settings, cut)


def _copies(frame: pd.DataFrame, layout: Layout, train_max: float | None) -> CopyPartial:
    return CopyPartial.map(normalise_frame(frame, source="partition"), layout, train_max)


def _merge(a: T, b: T) -> T:
    return a.merge(b)  # type: ignore[attr-defined]


def _tree(client: Any, futures: list[Any], finish: Callable[[Any], Any] | None = None) -> Any:
    """Merge partials pairwise on the workers, then gather the one result (``finish`` of it,
    computed on the worker that holds it, when given)."""
    while len(futures) > 1:
        paired = [
            client.submit(_merge, a, b) for a, b in zip(futures[::2], futures[1::2], strict=False)
        ]
        futures = paired + ([futures[-1]] if len(futures) % 2 else [])
    return (client.submit(finish, futures[0]) if finish else futures[0]).result()


def dask_audit(
    data: str | os.PathLike[str],
    build: dict[str, Any],
    settings: Settings,
    probes: list[str] | None,
    scheduler: str | None,
    tick: Callable[[str, int], None] | None = None,
) -> Findings:
    """Audit a Parquet file or folder with the partial statistics computed on Dask."""
    import dask
    import dask.dataframe as dd
    from distributed import Client, LocalCluster

    from featureaudit.judge.pipeline import run_audit
    from featureaudit.load.table import build_table

    if build.get("test") is not None:
        raise SettingError(
            "--engine dask reads one table with --split-column; pass --engine memory with --test."
        )
    arrow = parquet_dataset(data).schema  # the same checks of the path as stream
    schema = arrow.names
    layout = stream_layout(arrow, build)
    require_columns(schema, build, data)
    with _quiet_cluster():  # stderr carries one line, whatever the cluster logs
        cluster = None
        if scheduler is None:
            cluster = LocalCluster(
                n_workers=settings.n_jobs, threads_per_worker=1, dashboard_address=None
            )
        try:
            with dask.config.set({"dataframe.convert-string": False}):
                client = Client(scheduler or cluster)
                try:
                    parts = dd.read_parquet(str(data)).to_delayed()
                    first = _tree(
                        client,
                        client.compute([dask.delayed(_first)(p, layout, settings) for p in parts]),
                    )
                    rows = sum(first.counts.partitions.values())
                    if tick:
                        tick("pass 1 of 3", rows)
                    cut = first.sketch.cutoffs(settings.sample_rows)
                    picked = _tree(
                        client,
                        client.compute(
                            [dask.delayed(_rows)(p, layout, settings, cut) for p in parts]
                        ),
                    )
                    if tick:
                        tick("pass 2 of 3", rows)
                    sample = picked.draw(whole_row_keys(layout, settings)).to_pandas()
                    source = build.get("source") or Path(data).name
                    table = build_table(sample, **{**build, "source": source})
                    table.population_rows = int(sum(first.counts.partitions.values()))
                    layout = Layout(**{**layout.__dict__, "features": tuple(table.features)})
                    train_max = first.counts.times.get("train", [None, None])[1]
                    copies = _tree(  # only the counts come back, not the hash sets
                        client,
                        client.compute(
                            [dask.delayed(_copies)(p, layout, train_max) for p in parts]
                        ),
                        copy_counts,
                    )
                    if tick:
                        tick("pass 3 of 3", rows)
                finally:
                    client.close()
        finally:
            if cluster is not None:
                cluster.close()
    findings = run_audit(table, settings, probes=probes, progress=False)
    exact = exact_statistics(first.counts, copies)
    _report_engine(findings.document, exact, table.n_rows, layout, "dask", "three passes")
    return findings
