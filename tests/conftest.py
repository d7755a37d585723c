"""Shared pytest configuration.

Hypothesis runs derandomized by default, so that `make test` (and CI) draws the same cases
on every run; `HYPOTHESIS_PROFILE=explore` draws new random cases (use it while developing
and under `make fuzz` campaigns of your own).
"""

import os

from hypothesis import settings

settings.register_profile("ci", derandomize=True, database=None)
settings.register_profile("explore", derandomize=False)
settings.load_profile(os.environ.get("HYPOTHESIS_PROFILE", "ci"))
