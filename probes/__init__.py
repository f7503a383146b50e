"""The probes. Importing this package registers every finished probe."""

from featureaudit.probes import fitscope, separability, solo, timing, twins  # noqa: F401
