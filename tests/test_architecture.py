"""The house's import rules, read from the source with ``ast``: the core never imports a probe
module (discovery is the registry's job), and no module-level imports form a cycle."""

from __future__ import annotations

import ast
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
# where each import name lives in the source tree (probes/ is mapped into the package)
TREES = {"featureaudit": ROOT / "featureaudit", "featureaudit.probes": ROOT / "probes"}
# the one core module that may name the probes package: it imports it to register them
DISCOVERY = {"featureaudit.registry"}


def _modules() -> dict[str, Path]:
    out: dict[str, Path] = {}
    for prefix, tree in TREES.items():
        for path in tree.rglob("*.py"):
            parts = list(path.relative_to(tree).with_suffix("").parts)
            if parts[-1] == "__init__":
                parts = parts[:-1]
            out[".".join([prefix, *parts])] = path
    return out


def _imports(name: str, path: Path, top_level_only: bool) -> set[str]:
    """Modules ``name`` imports (absolute and relative), at module level or anywhere."""
    tree = ast.parse(path.read_text())
    package = name if path.name == "__init__.py" else name.rsplit(".", 1)[0]
    nodes = tree.body if top_level_only else list(ast.walk(tree))
    if top_level_only:  # an `if TYPE_CHECKING:` block does not run
        nodes = [n for n in nodes if not isinstance(n, ast.If)]
    found: set[str] = set()
    for node in nodes:
        if isinstance(node, ast.Import):
            found.update(a.name for a in node.names)
        elif isinstance(node, ast.ImportFrom):
            base = node.module or ""
            if node.level:
                anchor = package.rsplit(".", node.level - 1)[0] if node.level > 1 else package
                base = f"{anchor}.{base}" if base else anchor
            found.add(base)
            found.update(f"{base}.{a.name}" for a in node.names)
    return {m for m in found if m.startswith("featureaudit")}


def test_the_core_never_imports_a_probe_module():
    offenders = []
    for name, path in _modules().items():
        if name.startswith("featureaudit.probes") or name in DISCOVERY:
            continue
        bad = {m for m in _imports(name, path, False) if m.startswith("featureaudit.probes")}
        if bad:
            offenders.append((name, sorted(bad)))
    assert not offenders, f"core modules import probe code: {offenders}"


def _cycles(graph: dict[str, set[str]]) -> list[list[str]]:
    """Strongly connected components of more than one module (Tarjan's algorithm)."""
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    stack: list[str] = []
    on: set[str] = set()
    out: list[list[str]] = []

    def visit(v: str) -> None:
        index[v] = low[v] = len(index)
        stack.append(v)
        on.add(v)
        for w in graph.get(v, ()):
            if w not in index:
                visit(w)
                low[v] = min(low[v], low[w])
            elif w in on:
                low[v] = min(low[v], index[w])
        if low[v] == index[v]:
            comp = []
            while True:
                w = stack.pop()
                on.discard(w)
                comp.append(w)
                if w == v:
                    break
            if len(comp) > 1:
                out.append(sorted(comp))

    for v in sorted(graph):
        if v not in index:
            visit(v)
    return out


def test_no_import_cycle_at_module_level():
    modules = _modules()
    graph = {
        name: {m for m in _imports(name, path, True) if m in modules and m != name}
        for name, path in modules.items()
    }
    assert not _cycles(graph)


def test_the_cycle_finder_finds_a_cycle():
    assert _cycles({"a": {"b"}, "b": {"c"}, "c": {"a"}, "d": {"a"}}) == [["a", "b", "c"]]


def _example_probe_source() -> str:
    text = (ROOT / "DEVELOPERS.md").read_text()
    section = text.split("### A complete example", 1)[1]
    return section.split("```python\n", 1)[1].split("```", 1)[0]


def test_the_example_probe_of_developers_md_is_one_module_the_core_picks_up(monkeypatch):
    """The newcomer's test: the example probe registers from its one module, passes every
    common check, and the pipeline runs it on each pair of sides it declares."""
    import types

    import numpy as np

    import featureaudit as fa
    from featureaudit import registry
    from featureaudit.testing import noise_frame, yield_checks

    source = _example_probe_source()
    assert 40 <= source.count("\n") <= 80
    monkeypatch.setattr(registry, "_REGISTRY", dict(registry.registered()))
    module = types.ModuleType("missingshift_example")
    monkeypatch.setitem(sys.modules, "missingshift_example", module)
    exec(compile(source, "missingshift_example", "exec"), module.__dict__)
    probe = registry._REGISTRY["missingshift"]
    for _, check in yield_checks(probe):
        check(probe)

    frame = noise_frame(n=900, seed=7)
    rng = np.random.default_rng(7)
    frame["split"] = rng.choice(["train", "train", "train", "valid", "test"], len(frame))
    frame.loc[(frame["split"] == "test") & (rng.random(len(frame)) < 0.5), "x0"] = np.nan
    result = fa.audit(frame, target="y", split_column="split", probes=["missingshift"])
    pairs = {
        tuple(f["partitions"])
        for f in result.document["dataset_findings"]
        if f["probe"] == "missingshift"
    }
    # the whole table, then training against each held-out partition
    assert {("train", "valid"), ("train", "test")} <= pairs, pairs
    shifted = [
        f
        for f in result.document["dataset_findings"]
        if f["probe"] == "missingshift" and f["partitions"] == ["train", "test"]
    ]
    assert shifted and shifted[0]["level"] == "low" and "'x0'" in shifted[0]["summary"]
