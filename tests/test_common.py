"""Every registered probe through the common checks of ``featureaudit.testing``
(valid evidence, the same result for the same seed, its input untouched, skips with a reason
without a target, a split or enough rows, and no level it cannot support on clean,
awkward, one-class, numeric or multiclass data), plus the registry's own rules."""

import dataclasses
import importlib.metadata

import pytest

from featureaudit import registry
from featureaudit.registry import Probe, register, registered, unregister
from featureaudit.testing import awkward_frame, parametrize_with_checks

PROBES = sorted(registered())


@dataclasses.dataclass(frozen=True)
class _NoThresholds:
    """A probe whose level decisions use no numbers."""


@pytest.fixture()
def fresh_registry(monkeypatch):
    """The registry as the package builds it, restored after the test."""
    monkeypatch.setattr(registry, "_REGISTRY", dict(registry._REGISTRY))
    return registry._REGISTRY


@parametrize_with_checks([registered()[name] for name in PROBES])
def test_common_check(probe, check, fresh_registry):
    check(probe)


def test_every_probe_module_in_the_package_is_registered():
    import pkgutil

    import featureaudit.probes as package

    modules = {m.name for m in pkgutil.iter_modules(package.__path__) if not m.name.startswith("_")}
    assert modules == {
        cls.__module__.rsplit(".", 1)[-1]
        for cls in registered().values()
        if cls.__module__.startswith("featureaudit.probes.")
    }


def test_a_plugin_registers_through_its_entry_point(fresh_registry, monkeypatch):
    class Plugin(Probe):
        """A third-party probe that finds nothing, registered through an entry point."""

        name = "plugin_probe"
        kinds = ("target_proxy",)
        thresholds = _NoThresholds()

        @classmethod
        def describe(cls, settings):
            return "Finds nothing; it has no thresholds."

        def run(self, table, settings):
            return [], []

    class FakeEntryPoint:
        name, value = "plugin_probe", "plugin_package:Plugin"

        def load(self):
            return Plugin

    monkeypatch.setattr(
        importlib.metadata,
        "entry_points",
        lambda group: [FakeEntryPoint()] if group == "featureaudit.probes" else [],
    )
    monkeypatch.setattr(registry, "_plugins_loaded", False)
    assert registered()["plugin_probe"] is Plugin


def test_a_plugin_with_a_bad_declaration_is_rejected_when_it_registers(fresh_registry, monkeypatch):
    class NoKinds(Probe):
        """A third-party probe that declares no kinds."""

        name = "no_kinds"

        def run(self, table, settings):
            return [], []

    class FakeEntryPoint:
        name, value = "no_kinds", "plugin_package:NoKinds"

        def load(self):
            return NoKinds

    monkeypatch.setattr(importlib.metadata, "entry_points", lambda group: [FakeEntryPoint()])
    monkeypatch.setattr(registry, "_plugins_loaded", False)
    with pytest.raises(TypeError, match="kinds"):
        registered()


def test_registry_rejects_bad_declarations():
    with pytest.raises(TypeError, match="docstring"):

        @register
        class NoDoc(Probe):
            name = "nodoc"
            kinds = ("target_proxy",)

            def run(self, table, settings):
                return [], []

    with pytest.raises(TypeError, match="already registered"):

        @register
        class Again(Probe):
            """A second probe named like the first."""

            name = PROBES[0]
            kinds = ("target_proxy",)

            def run(self, table, settings):
                return [], []

    with pytest.raises(TypeError, match="kinds"):

        @register
        class BadKind(Probe):
            """A probe with a kind outside the contract."""

            name = "badkind"
            kinds = ("made_up",)

            def run(self, table, settings):
                return [], []

    with pytest.raises(TypeError, match="thresholds"):

        @register
        class NoThresholds(Probe):
            """A probe that does not declare the numbers its levels use."""

            name = "nothresholds"
            kinds = ("target_proxy",)

            def run(self, table, settings):
                return [], []

    with pytest.raises(TypeError, match="describe"):

        @register
        class NoDescribe(Probe):
            """A probe that does not describe its method."""

            name = "nodescribe"
            kinds = ("target_proxy",)
            thresholds = _NoThresholds()

            def run(self, table, settings):
                return [], []

    for name in ("nodoc", "badkind", "nothresholds", "nodescribe"):
        unregister(name)


def test_no_probe_fails_through_the_pipeline():
    import featureaudit as fa

    result = fa.audit(
        awkward_frame(),
        target="y",
        split_column="split",
        label_time="decided_at",
        entity="customer",
    )
    assert not [s for s in result.document["skipped"] if "failed" in s["reason"]]
    assert not [w for w in result.document["warnings"] if "failed" in w]
