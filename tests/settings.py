"""Settings for the test run: the app's own settings, a key that exists only for tests, and
static files served from the source folders (no collectstatic manifest needed)."""

import os

# Tests run with DEBUG off (pytest-django's default), which requires a real-looking key.
os.environ.setdefault("SECRET_KEY", "tests-only-key-never-used-outside-the-test-run-0123456789")

from planner.settings import *  # noqa: E402, F403
from planner.settings import STORAGES  # noqa: E402

STORAGES = STORAGES | {"staticfiles": {"BACKEND": "django.contrib.staticfiles.storage.StaticFilesStorage"}}
