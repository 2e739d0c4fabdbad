"""Settings come from the environment; bad or missing values fail loudly at start-up."""

import os
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]


def load_settings(**env) -> subprocess.CompletedProcess:
    clean = {k: v for k, v in os.environ.items() if k not in {"DEBUG", "SECRET_KEY", "DATABASE_URL"}}
    code = "import planner.settings as s; print(s.DATABASES['default']['ENGINE'], s.PLANNER_COMPUTE_CAP)"
    return subprocess.run([sys.executable, "-c", code], cwd=ROOT, env=clean | env, capture_output=True, text=True)


def test_defaults_run_on_sqlite():
    done = load_settings()
    assert done.returncode == 0, done.stderr
    assert done.stdout.split() == ["django.db.backends.sqlite3", "1200000000"]


def test_database_url_switches_to_postgresql():
    done = load_settings(DATABASE_URL="postgres://baker@127.0.0.1:5432/rolls")
    assert done.stdout.split()[0] == "django.db.backends.postgresql"


@pytest.mark.parametrize(
    ("env", "message"),
    [
        ({"DEBUG": "0"}, "SECRET_KEY must be set"),
        ({"DEBUG": "0", "SECRET_KEY": "short"}, "SECRET_KEY must be set"),
        ({"DEBUG": "maybe"}, "DEBUG must be 1 or 0"),
        ({"DATABASE_URL": "bakery://nowhere"}, "DATABASE_URL is malformed"),
        ({"PLANNER_COMPUTE_CAP": "lots"}, "PLANNER_COMPUTE_CAP must be a whole number"),
    ],
)
def test_bad_settings_fail_loudly(env, message):
    done = load_settings(**env)
    assert done.returncode != 0 and "ImproperlyConfigured" in done.stderr and message in done.stderr


def test_production_settings_accept_a_real_key():
    done = load_settings(DEBUG="0", SECRET_KEY="k" * 50)
    assert done.returncode == 0, done.stderr
