import os

from hypothesis import settings

# Property tests: a fixed, modest budget so CI stays fast and repeatable.
settings.register_profile("ci", max_examples=60, deadline=None, derandomize=True)
settings.load_profile(os.environ.get("HYPOTHESIS_PROFILE", "ci"))
