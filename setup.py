"""Package list for setuptools: every subpackage (of featureaudit and of probes) is found here,
so adding one needs no edit.

The distribution's one import name is ``featureaudit``; ``probes/`` and ``reports/`` are mapped
into it (see ``[tool.setuptools.package-dir]`` in pyproject.toml).
"""

from setuptools import find_packages, setup

setup(
    packages=[
        *(
            p
            for p in find_packages(exclude=["tests*", "benchmarks*", "probes*", "reports*"])
            if p.startswith("featureaudit")
        ),
        "featureaudit.reports",
        "featureaudit.sample_data",
        "featureaudit.probes",
        *(f"featureaudit.probes.{p}" for p in find_packages("probes")),
    ]
)
