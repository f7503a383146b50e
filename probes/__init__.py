"""The probes. Importing this package registers every finished probe."""

from featureaudit.probes import solo, timing  # noqa: F401
