"""Static audit of training code: leakage that lives in a script or notebook, not in the table.

Scripts and Jupyter notebooks are parsed with :mod:`ast` (nothing is executed); a data-flow
pass follows which variables hold all rows, training rows or held-out rows, and rules turn
fits, selections and scores on the wrong rows into findings.

May import: ``featureaudit.errors``, ``_version``, ``vocab`` and this room (it sits
below ``judge``, which joins its findings to the columns' evidence).
"""

from featureaudit.code.audit import CodeAudit, audit_code

__all__ = ["CodeAudit", "audit_code"]
