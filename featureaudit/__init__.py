"""featureaudit: find target leakage in a training table and its split before a model review."""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

__version__ = "0.2.0"

if TYPE_CHECKING:
    from featureaudit.api import AuditResult, audit
    from featureaudit.errors import FeatureAuditError

__all__ = ["audit", "AuditResult", "FeatureAuditError", "__version__"]


def __getattr__(name: str) -> Any:
    """Import the API on first use, so the CLI starts (and handles signals) before pandas."""
    if name in ("audit", "AuditResult"):
        from featureaudit import api

        return getattr(api, name)
    if name == "FeatureAuditError":
        from featureaudit.errors import FeatureAuditError

        return FeatureAuditError
    raise AttributeError(f"module 'featureaudit' has no attribute {name!r}")
