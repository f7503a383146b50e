"""The probe kit: the registry and its declarations, exact statistics from counts, out-of-fold
encodings, row hashes, the order-free feature matrix, the seeded sample and the pairs of sides
probes compare. Probes import from here; this room never imports a probe.

May import: ``featureaudit.errors``, ``vocab``, ``load`` and this room.
"""
