"""Jinja2 templates of the dossier and the review summary (package data)."""
