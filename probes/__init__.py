"""The probes. Importing this package registers every finished probe it holds.

A probe is a module (``probes/<name>.py``) or a subpackage (``probes/<name>/`` with the probe
class in its ``__init__``); every one whose name does not start with ``_`` is imported here,
and its ``@register`` decorator adds it to the registry. Nothing else needs editing.
"""

import importlib
import pkgutil

for _info in sorted(pkgutil.iter_modules(__path__), key=lambda m: m.name):
    if not _info.name.startswith("_"):
        importlib.import_module(f"{__name__}.{_info.name}")
