"""Settings shared by every test.

The property tests (hypothesis) draw their examples from a fixed seed, so that
a test run is reproducible: CI runs on a clean clone, with no example
database to replay a failure from. ``DROPKIN_EXPLORE=1`` draws fresh examples
and keeps the failing ones in ``.hypothesis/``, to look for new faults.
"""

import os

from hypothesis import settings

settings.register_profile("reproducible", derandomize=True, database=None)
settings.register_profile("explore")
settings.load_profile("explore" if os.environ.get("DROPKIN_EXPLORE") else "reproducible")
