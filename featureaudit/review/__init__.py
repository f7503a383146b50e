"""The review workflow: suspects a person accepted (``--accepted``) and the run history
(``--history``).

May import: everything below it (``vocab``, ``load``, ``kit``, ``code``, ``judge``) and this
room.
"""
