"""Test-wide settings.

Under CI (environment variable CI set) hypothesis runs derandomized, so a CI run is reproducible and a
failure there is the same failure on a developer's machine; locally it keeps exploring new examples.
"""

import os

from hypothesis import settings

settings.register_profile("ci", derandomize=True, print_blob=True)
if os.environ.get("CI"):
    settings.load_profile("ci")
