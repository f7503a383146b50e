"""Judging: run the registered probes (pipeline), rank their evidence into verdicts, give each
finding its remedy, measure the impact on a validation score, and build the findings document.

May import: ``featureaudit.errors``, ``vocab``, ``load``, ``kit``, ``code`` and this room.
"""
