"""Split conventions shared by the probes that simulate the split a user is about to make."""

from __future__ import annotations

__all__ = ["SIMULATED_HELDOUT_SHARE"]

# Without a split, probes simulate a random split that holds out this share of the rows
# (the common 80/20 split; common practice, no source).
SIMULATED_HELDOUT_SHARE = 0.2
