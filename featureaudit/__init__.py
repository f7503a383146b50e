"""featureaudit: find target leakage in a training table and its split before a model review."""

from __future__ import annotations

from featureaudit._version import __version__

__all__ = ["audit", "AuditResult", "FeatureAuditError", "__version__"]


def __getattr__(name: str) -> object:
    """Import the API on first use: the CLI then sets its signal handlers before any heavy
    import (typing and pandas included), so an early interrupt is handled too."""
    if name in ("audit", "AuditResult"):
        from featureaudit import api

        return getattr(api, name)
    if name == "FeatureAuditError":
        from featureaudit.errors import FeatureAuditError

        return FeatureAuditError
    raise AttributeError(f"module 'featureaudit' has no attribute {name!r}")
