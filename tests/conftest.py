"""Test settings: hypothesis draws the same examples on every run unless asked not to.

``HYPOTHESIS_PROFILE=explore`` draws fresh examples each run (for hunting bugs
locally); the default profile ``fixed`` derives them from each test's source,
so CI runs are reproducible like every other seeded test here.
"""

from __future__ import annotations

import os

from hypothesis import settings

settings.register_profile("fixed", derandomize=True, print_blob=True)
settings.register_profile("explore", derandomize=False, print_blob=True)
settings.load_profile(os.environ.get("HYPOTHESIS_PROFILE", "fixed"))
