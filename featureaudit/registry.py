"""The probe protocol and registry. A probe is rejected when it registers, not when it runs."""

from __future__ import annotations

from dataclasses import fields, is_dataclass
from enum import IntEnum
from typing import Any, ClassVar

from featureaudit.evidence import KINDS, Evidence, Skip
from featureaudit.settings import Settings
from featureaudit.table import AuditTable

__all__ = ["Probe", "register", "registered", "ProbeOutput", "thresholds_dict"]

ProbeOutput = tuple[list[Evidence], list[Skip]]
_REGISTRY: dict[str, type[Probe]] = {}


class Probe:
    """Base class: set ``name``, ``scope`` and ``kinds``; fill :meth:`run`.

    ``run`` returns the evidence it found and the parts it skipped with a reason. It must
    not modify the table, and the same seed must give the same result.
    """

    name: ClassVar[str] = ""
    scope: ClassVar[str] = "column"  # "column" or "table"
    kinds: ClassVar[tuple[str, ...]] = ()
    # The probe's thresholds: an instance of a frozen dataclass whose fields are the numbers
    # its level decisions use, each with its source in the class docstring. Recorded in
    # findings.json and quoted by ``describe``.
    thresholds: ClassVar[Any] = None

    @classmethod
    def describe(cls, settings: Settings) -> str:
        """The method and its thresholds in one paragraph, with the settings in force."""
        raise NotImplementedError

    def run(self, table: AuditTable, settings: Settings) -> ProbeOutput:
        raise NotImplementedError


def register(cls: type[Probe]) -> type[Probe]:
    """Class decorator: validate the probe's declaration and add it to the registry."""
    if not cls.name or not cls.name.isidentifier():
        raise TypeError(f"probe {cls.__name__} needs a name that is an identifier")
    if cls.name in _REGISTRY:
        raise TypeError(f"probe name {cls.name!r} is already registered")
    if cls.scope not in ("column", "table"):
        raise TypeError(f"probe {cls.name!r} has scope {cls.scope!r}; use 'column' or 'table'")
    if not cls.kinds or any(k not in KINDS for k in cls.kinds):
        raise TypeError(
            f"probe {cls.name!r} declares kinds {cls.kinds}; each must be one of {KINDS}"
        )
    if not (cls.__doc__ or "").strip():
        raise TypeError(
            f"probe {cls.name!r} needs a docstring saying what it detects and how "
            "its thresholds were chosen"
        )
    if cls.run is Probe.run:
        raise TypeError(f"probe {cls.name!r} does not implement run()")
    params = getattr(type(cls.thresholds), "__dataclass_params__", None)
    if params is None or not params.frozen:
        raise TypeError(
            f"probe {cls.name!r} needs thresholds: an instance of a frozen dataclass "
            "whose fields are the numbers its levels use"
        )
    if cls.describe.__func__ is Probe.describe.__func__:  # type: ignore[attr-defined]
        raise TypeError(f"probe {cls.name!r} does not implement describe(settings)")
    _REGISTRY[cls.name] = cls
    return cls


ENTRY_POINT_GROUP = "featureaudit.probes"
_plugins_loaded = False


def _load_plugins() -> None:
    """Register third-party probes named in the ``featureaudit.probes`` entry-point group.

    An entry point names a probe class (registered here) or a module whose ``@register``
    decorators run on import. A plugin is checked exactly as a built-in probe is.
    """
    global _plugins_loaded
    if _plugins_loaded:
        return
    _plugins_loaded = True
    from importlib.metadata import entry_points

    for ep in sorted(entry_points(group=ENTRY_POINT_GROUP), key=lambda e: e.name):
        try:
            obj = ep.load()
        except Exception as exc:
            raise TypeError(
                f"probe plugin {ep.name!r} ({ep.value}) failed to import: "
                f"{type(exc).__name__}: {exc}"
            ) from exc
        if isinstance(obj, type) and issubclass(obj, Probe) and _REGISTRY.get(obj.name) is not obj:
            register(obj)


def thresholds_dict(thresholds: Any) -> dict[str, Any]:
    """A probe's thresholds as plain JSON values; a ladder as ``{level: floor}``."""
    from featureaudit.levels import Ladder

    out: dict[str, Any] = {}
    for f in fields(thresholds):
        value = getattr(thresholds, f.name)
        if isinstance(value, Ladder):
            value = value.to_dict()
        elif is_dataclass(value) and not isinstance(value, type):
            value = thresholds_dict(value)
        elif isinstance(value, IntEnum):
            value = str(value)
        out[f.name] = value
    return out


def registered() -> dict[str, type[Probe]]:
    """Every registered probe by name: the built-in ones (importing featureaudit.probes
    registers them) and those of installed plugins."""
    import featureaudit.probes  # noqa: F401  (registers on import)

    _load_plugins()
    return dict(_REGISTRY)


def unregister(name: str) -> None:
    """Remove a probe (for tests that register throwaway probes)."""
    _REGISTRY.pop(name, None)
