"""Build the development corpus: choose the real tables, generate the cases, cache them.

Deterministic: the tables, their targets, the cases and every random draw follow from the
installed wheels and the seed. The cache (Parquet and JSON under benchmarks/out/corpus/,
git-ignored) is keyed by the seed and the builder's own source, so a change to the builder
rebuilds it.

    python benchmarks/corpus_build.py [--seed 0] [--fast] [--only PACKAGE]
"""

from __future__ import annotations

import argparse
import hashlib
import json
import shutil
import sys
import warnings
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))

import corpus_plant as cp  # noqa: E402
import corpus_sources as cs  # noqa: E402

OUT = Path(__file__).resolve().parent / "out" / "corpus"
MIN_TABLES_PER_PACKAGE = 1
ROLE_ARGS = ("split_column", "entity", "label_time", "fold_column")


@dataclass(frozen=True)
class Table:
    """A chosen real table with its target."""

    package: str
    item: str
    title: str
    target: str
    task: str
    frame: pd.DataFrame

    @property
    def key(self) -> str:
        return f"{self.package}/{self.item}"


def builder_version(seed: int) -> str:
    """Hash of the builder's sources and the seed: the cache folder's name."""
    here = Path(__file__).resolve().parent
    digest = hashlib.sha256(str(seed).encode())
    for name in ("corpus_build.py", "corpus_plant.py", "corpus_sources.py"):
        digest.update((here / name).read_bytes())
    return digest.hexdigest()[:12]


def _load(ref: cs.TableRef, reserved: pd.DataFrame) -> Table | None:
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        try:
            raw = ref.load()
        except Exception:  # a table its package cannot load is left out, not fatal
            return None
    if not isinstance(raw, pd.DataFrame) or len(raw) < cs.MIN_ROWS:
        return None
    if ref.package != "palmerpenguins" and cs.copies_reserved(ref.item, raw, reserved):
        return None
    frame = cs.tidy(raw, ref.key)
    chosen = cs.choose_target(frame)
    if chosen is None or frame.shape[1] < 3:
        return None
    target, task = chosen
    frame = frame.dropna(subset=[target]).reset_index(drop=True)
    features = [c for c in frame.columns if c != target][: cs.MAX_FEATURES]
    frame = frame[[*features, target]]
    if len(frame) < cs.MIN_ROWS:
        return None
    return Table(ref.package, ref.item, ref.title, target, task, frame)


def select_tables(only: str | None = None, limit: int | None = None) -> list[Table]:
    """The corpus's real tables: loadable, with a target, not a copy of another chosen table
    or of a reserved one, at most PER_PACKAGE per R package."""
    reserved = cs.reserved_entries()
    seen: list[frozenset[str]] = []
    per_package: dict[str, int] = {}
    tables: list[Table] = []
    for ref in cs.candidate_refs():
        if only and ref.package != only:
            continue
        if per_package.get(ref.package, 0) >= cs.PER_PACKAGE:
            continue
        table = _load(ref, reserved)
        if table is None:
            continue
        mark = cs.fingerprint(table.frame)
        if any(len(mark & other) >= 2 for other in seen):
            continue
        seen.append(mark)
        per_package[ref.package] = per_package.get(ref.package, 0) + 1
        tables.append(table)
        if limit and len(tables) >= limit:
            break
    return tables


def _fits(spec: cp.Spec, table: Table) -> bool:
    if spec.needs == "numeric":
        return table.task == "numeric"
    if spec.needs == "numeric_feature":
        return bool(cp.numeric_features(table.frame, table.target))
    return True


def _pick(specs: list[cp.Spec], start: int, table: Table, seed: int) -> tuple[cp.Spec, cp.Built]:
    """The first spec from ``start`` (in rotation) that applies to the table."""
    for step in range(len(specs)):
        spec = specs[(start + step) % len(specs)]
        if not _fits(spec, table):
            continue
        rng = np.random.default_rng(cs.stable_hash(f"{seed}/{table.key}/{spec.name}"))
        built = spec.build(table.frame, table.target, table.task, rng)
        if built is not None:
            return spec, built
    raise RuntimeError(f"no case applies to {table.key}")


def _honest_columns(built: cp.Built, target: str) -> list[str]:
    roles = {built.args.get(a) for a in ROLE_ARGS}
    return [c for c in built.frame.columns if c != target and c not in roles | set(built.planted)]


def _save(folder: Path, case: dict, built: cp.Built) -> None:
    folder.mkdir(parents=True, exist_ok=True)
    built.frame.to_parquet(folder / "frame.parquet", index=False)
    if built.test is not None:
        built.test.to_parquet(folder / "test.parquet", index=False)
    if built.dictionary is not None:
        built.dictionary.to_csv(folder / "dictionary.csv", index=False)
    (folder / "case.json").write_text(json.dumps(case, indent=1, sort_keys=True))


def case_record(table: Table, spec: cp.Spec, built: cp.Built) -> dict:
    """The case's definition, expectation included, as stored beside its tables."""
    return {
        "id": f"{table.package}__{table.item}__{spec.name}",
        "package": table.package,
        "table": table.item,
        "title": table.title,
        "spec": spec.name,
        "klass": spec.klass,
        "status": "planted" if spec.kind else "honest",
        "kind": spec.kind,
        "min_level": spec.min_level,
        "planted": built.planted,
        "split_kind": built.split_kind,
        "honest": _honest_columns(built, table.target),
        "real_columns": [c for c in table.frame.columns if c != table.target],
        "args": built.args,
        "rows": len(built.frame),
    }


def build_cases(
    tables: list[Table], seed: int, planted_per_table: int = 1
) -> list[tuple[dict, cp.Built]]:
    """One honest case and ``planted_per_table`` planted cases per table, the specs taken
    in rotation over the tables' order so that every spec lands on many packages."""
    out = []
    for i, table in enumerate(tables):
        spec, built = _pick(cp.HONEST, i, table, seed)
        out.append((case_record(table, spec, built), built))
        for j in range(planted_per_table):
            start = i * planted_per_table + j
            spec, built = _pick(cp.PLANTED, start, table, seed)
            out.append((case_record(table, spec, built), built))
    return out


def build(
    seed: int = 0,
    only: str | None = None,
    limit: int | None = None,
    planted_per_table: int = 1,
    root: Path = OUT,
) -> Path:
    """Build (or reuse) the cached corpus; return its folder."""
    tag = f"{builder_version(seed)}-{only or 'all'}-{limit or 'all'}-{planted_per_table}"
    folder = root / "cases" / tag
    if (folder / "manifest.json").exists():
        return folder
    tmp = folder.with_name(folder.name + ".tmp")
    shutil.rmtree(tmp, ignore_errors=True)
    tables = select_tables(only, limit)
    ids = []
    for case, built in build_cases(tables, seed, planted_per_table):
        _save(tmp / case["id"], case, built)
        ids.append(case["id"])
    manifest = {
        "seed": seed,
        "tables": [
            {
                "package": t.package,
                "table": t.item,
                "title": t.title,
                "target": t.target,
                "task": t.task,
                "rows": len(t.frame),
                "columns": t.frame.shape[1],
            }
            for t in tables
        ],
        "cases": ids,
    }
    (tmp / "manifest.json").write_text(json.dumps(manifest, indent=1))
    shutil.rmtree(folder, ignore_errors=True)
    tmp.rename(folder)
    return folder


def load_case(folder: Path) -> tuple[dict, pd.DataFrame, dict]:
    """A cached case: its record, its table and the keyword arguments of ``audit``."""
    case = json.loads((folder / "case.json").read_text())
    frame = pd.read_parquet(folder / "frame.parquet")
    args = dict(case["args"])
    if (folder / "test.parquet").exists():
        args["test"] = pd.read_parquet(folder / "test.parquet")
    if (folder / "dictionary.csv").exists():
        args["dictionary"] = str(folder / "dictionary.csv")
    return case, frame, args


def main() -> None:
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--seed", type=int, default=0)
    p.add_argument("--only", help="one source package")
    p.add_argument("--limit", type=int, help="at most this many tables")
    p.add_argument("--planted-per-table", type=int, default=1)
    a = p.parse_args()
    folder = build(a.seed, a.only, a.limit, a.planted_per_table)
    manifest = json.loads((folder / "manifest.json").read_text())
    packages = {t["package"] for t in manifest["tables"]}
    print(
        f"{folder}: {len(manifest['tables'])} tables, {len(packages)} packages, "
        f"{len(manifest['cases'])} cases"
    )


if __name__ == "__main__":
    main()
