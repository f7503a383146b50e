"""The words every room shares: levels and their ladders, the table of kinds and remedies,
evidence and verdicts, and how a column name is written on a line.

May import: ``featureaudit.errors`` and this room only.
"""
