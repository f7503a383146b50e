"""The probe protocol and registry. A probe is rejected when it registers, not when it runs."""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field, fields, is_dataclass
from enum import IntEnum
from types import MappingProxyType
from typing import Any, ClassVar

from featureaudit.evidence import Evidence, Skip
from featureaudit.kinds import KINDS, REMEDIES
from featureaudit.settings import Settings
from featureaudit.table import AuditTable

__all__ = [
    "PAIRS",
    "Capabilities",
    "Probe",
    "ProbeOutput",
    "register",
    "registered",
    "thresholds_dict",
]

ProbeOutput = tuple[list[Evidence], list[Skip]]
_REGISTRY: dict[str, type[Probe]] = {}

# The pairs of sides a probe that compares sides can be run on, beyond the whole table:
# "partition": training against each held-out partition; "between_heldout": two held-out
# partitions against each other; "growing_fit": training plus the earlier partitions against
# a later one (what a fit refreshed before each partition saw); "fold": each CV fold against
# the other training folds.
PAIRS = ("partition", "between_heldout", "growing_fit", "fold")


@dataclass(frozen=True)
class Capabilities:
    """What a probe needs and offers, read by the core instead of the probe's name.

    ``needs_target``: skipped with one reason when the audit has no target.
    ``needs_every_row``: ``None``, or why the probe cannot judge a sample of the table (an
    engine then skips it there and says why).
    ``pairs``: the pairs of sides it is run on again (see ``PAIRS``); it reports the kinds the
    kinds table judges per pair.
    ``remedies``: a kind whose remedy differs from the kinds table's when this probe reports
    it (an in-sample target encoding is refitted, not dropped).
    """

    needs_target: bool = False
    needs_every_row: str | None = None
    pairs: frozenset[str] = frozenset()
    remedies: Mapping[str, str] = field(default_factory=lambda: MappingProxyType({}))

    def __post_init__(self) -> None:
        object.__setattr__(self, "pairs", frozenset(self.pairs))
        object.__setattr__(self, "remedies", MappingProxyType(dict(self.remedies)))

    @property
    def compares_sides(self) -> bool:
        """Whether the probe is run on pairs of partitions or folds."""
        return bool(self.pairs)


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
    capabilities: ClassVar[Capabilities] = Capabilities()

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
    _check_capabilities(cls)
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


def _check_capabilities(cls: type[Probe]) -> None:
    caps = cls.capabilities
    if not isinstance(caps, Capabilities):
        raise TypeError(f"probe {cls.name!r} needs capabilities: a Capabilities instance")
    unknown = sorted(set(caps.pairs) - set(PAIRS))
    if unknown:
        raise TypeError(f"probe {cls.name!r} declares pairs {unknown}; each must be one of {PAIRS}")
    for k, remedy in caps.remedies.items():
        if k not in cls.kinds or remedy not in REMEDIES:
            raise TypeError(
                f"probe {cls.name!r} declares remedy {remedy!r} for kind {k!r}; the kind must "
                f"be one of its kinds and the remedy one of {REMEDIES}"
            )


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
