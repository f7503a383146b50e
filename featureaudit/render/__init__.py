"""Rendering: the dossier, summary and drop list, their inline charts, ``diff`` output, and the
writer that puts a report in place whole or not at all.

May import: every room below it (up to ``review``) and this room.
"""
