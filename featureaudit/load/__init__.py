"""Reading and checking every input of an audit: tables (io), durations and times, the data
dictionary, the declared inputs and settings, the thread setting, and the audit table built
from them.

May import: ``featureaudit.errors``, ``featureaudit.vocab`` and this room.
"""
