"""Settings come from the environment; bad or missing values fail loudly at start-up."""

import os
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]


def load_settings(**env) -> subprocess.CompletedProcess:
    clean = {k: v for k, v in os.environ.items() if k not in {"DEBUG", "SECRET_KEY", "DATABASE_URL"}}
    code = (
        "import planner.settings as s; "
        "print(s.DATABASES['default']['ENGINE'], s.PLANNER_COMPUTE_CAP, s.DEBUG, "
        "s.STORAGES['staticfiles']['BACKEND'].rsplit('.', 1)[1])"
    )
    return subprocess.run([sys.executable, "-c", code], cwd=ROOT, env=clean | env, capture_output=True, text=True)


KEY = "k" * 50


def test_defaults_run_on_sqlite_with_debug_off():
    done = load_settings(SECRET_KEY=KEY)
    assert done.returncode == 0, done.stderr
    # DEBUG off: static files from the collectstatic manifest, served by WhiteNoise.
    assert done.stdout.split() == [
        "django.db.backends.sqlite3",
        "1200000000",
        "False",
        "CompressedManifestStaticFilesStorage",
    ]


def test_no_environment_at_all_refuses_to_start_without_a_key():
    # A fresh shell with nothing set is a production start until DEBUG=1 says otherwise.
    done = load_settings()
    assert done.returncode != 0 and "SECRET_KEY must be set" in done.stderr


def test_debug_only_when_the_environment_sets_it():
    done = load_settings(DEBUG="1")
    assert done.returncode == 0, done.stderr
    assert done.stdout.split()[2:] == ["True", "StaticFilesStorage"]


def test_database_url_switches_to_postgresql():
    done = load_settings(SECRET_KEY=KEY, DATABASE_URL="postgres://baker@127.0.0.1:5432/rolls")
    assert done.stdout.split()[0] == "django.db.backends.postgresql"


@pytest.mark.parametrize(
    ("env", "message"),
    [
        ({"DEBUG": "0"}, "SECRET_KEY must be set"),
        ({"DEBUG": "0", "SECRET_KEY": "short"}, "SECRET_KEY must be set"),
        ({"SECRET_KEY": "dev-only-key-not-for-production"}, "SECRET_KEY must be set"),
        ({"DEBUG": "maybe"}, "DEBUG must be 1 or 0"),
        ({"DEBUG": "1", "DATABASE_URL": "bakery://nowhere"}, "DATABASE_URL is malformed"),
        ({"DEBUG": "1", "PLANNER_COMPUTE_CAP": "lots"}, "PLANNER_COMPUTE_CAP must be a whole number"),
    ],
)
def test_bad_settings_fail_loudly(env, message):
    done = load_settings(**env)
    assert done.returncode != 0 and "ImproperlyConfigured" in done.stderr and message in done.stderr


def test_production_settings_accept_a_real_key():
    done = load_settings(DEBUG="0", SECRET_KEY=KEY)
    assert done.returncode == 0, done.stderr
