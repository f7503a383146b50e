"""featureaudit: find target leakage in a training table and its split before a model review."""

from __future__ import annotations

__version__ = "0.2.0"

from featureaudit.api import AuditResult, audit  # noqa: E402
from featureaudit.errors import FeatureAuditError  # noqa: E402

__all__ = ["audit", "AuditResult", "FeatureAuditError", "__version__"]
