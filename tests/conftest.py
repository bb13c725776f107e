"""Test settings shared by every test file."""
from hypothesis import settings

# Property tests draw their examples from a fixed seed, so a CI run is repeatable; run with
# HYPOTHESIS_PROFILE=explore (or change the profile) to search with fresh random examples.
settings.register_profile("repeatable", derandomize=True, print_blob=True)
settings.register_profile("explore", derandomize=False)

import os  # noqa: E402

settings.load_profile(os.environ.get("HYPOTHESIS_PROFILE", "repeatable"))
