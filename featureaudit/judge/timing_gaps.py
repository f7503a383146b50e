"""Features whose timing the dictionary leaves blank while it documents others'.

When a dictionary gives ``known_at`` for some features, a blank one is more likely an
omission than a choice; the dossier lists them as "timing not documented".
"""

from __future__ import annotations

from featureaudit.load.table import AuditTable

__all__ = ["timing_gap_warning"]

NOTE = "timing not documented: "


def timing_gap_warning(table: AuditTable) -> list[str]:
    """One warning naming the undocumented features, or none when none are (or none are
    documented at all)."""
    if table.dictionary is None:
        return []
    entries = table.dictionary.entries
    documented = [f for f in table.features if f in entries and entries[f].known_at]
    if not documented:
        return []
    missing = [f for f in table.features if not (f in entries and entries[f].known_at)]
    if not missing:
        return []
    return [
        NOTE + ", ".join(missing) + f"; the dictionary gives known_at for {len(documented)} "
        "other features, so these were not checked for timing."
    ]
