"""Package list for setuptools: every probe subpackage is found here, so adding one needs no edit.

The distribution's one import name is ``featureaudit``; ``probes/`` and ``reports/`` are mapped
into it (see ``[tool.setuptools.package-dir]`` in pyproject.toml).
"""

from setuptools import find_packages, setup

setup(
    packages=[
        "featureaudit",
        "featureaudit.code",
        "featureaudit.reports",
        "featureaudit.sample_data",
        "featureaudit.probes",
        *(f"featureaudit.probes.{p}" for p in find_packages("probes")),
    ]
)
