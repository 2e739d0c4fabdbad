"""Settings come from the environment; bad or missing values fail loudly at start-up."""

import json
import os
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
# Every variable planner/settings.py reads: a test starts from none of them set.
READ = {
    "DEBUG",
    "SECRET_KEY",
    "DATABASE_URL",
    "ALLOWED_HOSTS",
    "PLANNER_COMPUTE_CAP",
    "SECURE_SSL_REDIRECT",
    "SESSION_COOKIE_SECURE",
    "CSRF_COOKIE_SECURE",
    "SECURE_HSTS_SECONDS",
    "SECURE_HSTS_INCLUDE_SUBDOMAINS",
    "SECURE_HSTS_PRELOAD",
    "CSRF_TRUSTED_ORIGINS",
    "SECURE_PROXY_SSL_HEADER",
    "PLANNER_PROXY_COUNT",
    "AXES_FAILURE_LIMIT",
    "AXES_COOLOFF_TIME",
    "PLANNER_TASKS_BACKEND",
    "PORTFOLIO_CHUNK_ITEMS",
    "PORTFOLIO_LEASE_SECONDS",
    "PORTFOLIO_MAX_ATTEMPTS",
    "PORTFOLIO_ITEM_CAP",
}


# Set by tests/browser/conftest.py for Playwright in this process; a deployment never has it (async.E001).
TEST_RUN_ONLY = {"DJANGO_ALLOW_ASYNC_UNSAFE"}


def clean_env(**env) -> dict:
    return {k: v for k, v in os.environ.items() if k not in READ | TEST_RUN_ONLY} | env


def load_settings(**env) -> subprocess.CompletedProcess:
    code = (
        "import planner.settings as s; "
        "print(s.DATABASES['default']['ENGINE'], s.PLANNER_COMPUTE_CAP, s.DEBUG, "
        "s.STORAGES['staticfiles']['BACKEND'].rsplit('.', 1)[1])"
    )
    return subprocess.run([sys.executable, "-c", code], cwd=ROOT, env=clean_env(**env), capture_output=True, text=True)


def read_settings(*names: str, **env) -> dict:
    """The values of ``names`` in planner/settings.py loaded in a fresh interpreter with ``env``."""
    code = f"import json, planner.settings as s; print(json.dumps({{n: getattr(s, n) for n in {list(names)!r}}}))"
    done = subprocess.run([sys.executable, "-c", code], cwd=ROOT, env=clean_env(**env), capture_output=True, text=True)
    assert done.returncode == 0, done.stderr
    return json.loads(done.stdout)


KEY = "k" * 50


def test_defaults_run_on_sqlite_with_debug_off():
    done = load_settings(SECRET_KEY=KEY)
    assert done.returncode == 0, done.stderr
    # DEBUG off: static files from the collectstatic manifest, served by WhiteNoise.
    assert done.stdout.split() == [
        "django.db.backends.sqlite3",
        "5000000000",
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
        ({"DEBUG": "1", "SECURE_SSL_REDIRECT": "sometimes"}, "SECURE_SSL_REDIRECT must be 1 or 0"),
        ({"DEBUG": "1", "SESSION_COOKIE_SECURE": "2"}, "SESSION_COOKIE_SECURE must be 1 or 0"),
        ({"DEBUG": "1", "CSRF_COOKIE_SECURE": "y"}, "CSRF_COOKIE_SECURE must be 1 or 0"),
        ({"DEBUG": "1", "SECURE_HSTS_SECONDS": "a year"}, "SECURE_HSTS_SECONDS must be a whole number at least 0"),
        ({"DEBUG": "1", "SECURE_HSTS_SECONDS": "-1"}, "SECURE_HSTS_SECONDS must be a whole number at least 0"),
        ({"DEBUG": "1", "SECURE_HSTS_PRELOAD": "please"}, "SECURE_HSTS_PRELOAD must be 1 or 0"),
        ({"DEBUG": "1", "CSRF_TRUSTED_ORIGINS": "planner.bakery.invalid"}, "CSRF_TRUSTED_ORIGINS must list origins"),
        ({"DEBUG": "1", "CSRF_TRUSTED_ORIGINS": "https://a.invalid/path"}, "CSRF_TRUSTED_ORIGINS must list origins"),
        (
            {"DEBUG": "1", "SECURE_PROXY_SSL_HEADER": "X-Forwarded-Proto"},
            "SECURE_PROXY_SSL_HEADER must be HEADER,value",
        ),
        ({"DEBUG": "1", "SECURE_PROXY_SSL_HEADER": "HTTP_X_FORWARDED_PROTO"}, "SECURE_PROXY_SSL_HEADER must be"),
        ({"DEBUG": "1", "PLANNER_PROXY_COUNT": "one"}, "PLANNER_PROXY_COUNT must be a whole number at least 0"),
        ({"DEBUG": "1", "AXES_FAILURE_LIMIT": "0"}, "AXES_FAILURE_LIMIT must be a whole number at least 1"),
        ({"DEBUG": "1", "AXES_COOLOFF_TIME": "0"}, "AXES_COOLOFF_TIME must be a number of hours above 0"),
        ({"DEBUG": "1", "AXES_COOLOFF_TIME": "15m"}, "AXES_COOLOFF_TIME must be a number of hours above 0"),
        ({"DEBUG": "1", "PLANNER_TASKS_BACKEND": "redis"}, "PLANNER_TASKS_BACKEND must be database or immediate"),
        ({"DEBUG": "1", "PORTFOLIO_CHUNK_ITEMS": "0"}, "PORTFOLIO_CHUNK_ITEMS must be a whole number at least 1"),
        ({"DEBUG": "1", "PORTFOLIO_LEASE_SECONDS": "1m"}, "PORTFOLIO_LEASE_SECONDS must be a whole number"),
    ],
)
def test_bad_settings_fail_loudly(env, message):
    done = load_settings(**env)
    assert done.returncode != 0 and "ImproperlyConfigured" in done.stderr and message in done.stderr


def test_production_settings_accept_a_real_key():
    done = load_settings(DEBUG="0", SECRET_KEY=KEY)
    assert done.returncode == 0, done.stderr


SECURITY = [
    "SECURE_SSL_REDIRECT",
    "SESSION_COOKIE_SECURE",
    "CSRF_COOKIE_SECURE",
    "SECURE_HSTS_SECONDS",
    "SECURE_HSTS_INCLUDE_SUBDOMAINS",
    "SECURE_HSTS_PRELOAD",
    "CSRF_TRUSTED_ORIGINS",
    "SECURE_PROXY_SSL_HEADER",
    "ALLOWED_HOSTS",
    "PLANNER_PROXY_COUNT",
    "AXES_FAILURE_LIMIT",
    "AXES_COOLOFF_TIME",
]

# What a TLS deployment behind one proxy sets (README, "Production server").
PRODUCTION = {
    "DEBUG": "0",
    # check --deploy asks for 50+ characters, 5+ of them different (security.W009)
    "SECRET_KEY": "rye-spelt-barley-oat-millet-teff-einkorn-emmer-sorghum-0123456789",
    "ALLOWED_HOSTS": "planner.bakery.invalid",
    "SECURE_SSL_REDIRECT": "1",
    "SESSION_COOKIE_SECURE": "1",
    "CSRF_COOKIE_SECURE": "1",
    "SECURE_HSTS_SECONDS": "31536000",
    "SECURE_HSTS_INCLUDE_SUBDOMAINS": "1",
    "SECURE_HSTS_PRELOAD": "1",
    "CSRF_TRUSTED_ORIGINS": "https://planner.bakery.invalid",
    "SECURE_PROXY_SSL_HEADER": "HTTP_X_FORWARDED_PROTO,https",
    "PLANNER_PROXY_COUNT": "1",
}


def test_security_defaults_suit_plain_local_http():
    # `make run` sets none of these and serves http://127.0.0.1:8000: nothing may insist on https.
    assert read_settings(*SECURITY, SECRET_KEY=KEY) == {
        "SECURE_SSL_REDIRECT": False,
        "SESSION_COOKIE_SECURE": False,
        "CSRF_COOKIE_SECURE": False,
        "SECURE_HSTS_SECONDS": 0,
        "SECURE_HSTS_INCLUDE_SUBDOMAINS": False,
        "SECURE_HSTS_PRELOAD": False,
        "CSRF_TRUSTED_ORIGINS": [],
        "SECURE_PROXY_SSL_HEADER": None,
        "ALLOWED_HOSTS": ["localhost", "127.0.0.1", "[::1]"],
        "PLANNER_PROXY_COUNT": 0,
        "AXES_FAILURE_LIMIT": 10,
        "AXES_COOLOFF_TIME": 0.25,
    }


def test_each_security_setting_comes_from_the_variable_of_its_name():
    env = PRODUCTION | {
        "CSRF_TRUSTED_ORIGINS": "https://planner.bakery.invalid, https://plans.bakery.invalid:8443",
        "AXES_FAILURE_LIMIT": "5",
        "AXES_COOLOFF_TIME": "1.5",
    }
    assert read_settings(*SECURITY, **env) == {
        "SECURE_SSL_REDIRECT": True,
        "SESSION_COOKIE_SECURE": True,
        "CSRF_COOKIE_SECURE": True,
        "SECURE_HSTS_SECONDS": 31536000,
        "SECURE_HSTS_INCLUDE_SUBDOMAINS": True,
        "SECURE_HSTS_PRELOAD": True,
        "CSRF_TRUSTED_ORIGINS": ["https://planner.bakery.invalid", "https://plans.bakery.invalid:8443"],
        "SECURE_PROXY_SSL_HEADER": ["HTTP_X_FORWARDED_PROTO", "https"],  # a tuple, through JSON
        "ALLOWED_HOSTS": ["planner.bakery.invalid"],
        "PLANNER_PROXY_COUNT": 1,
        "AXES_FAILURE_LIMIT": 5,
        "AXES_COOLOFF_TIME": 1.5,
    }


def check_deploy(**env) -> subprocess.CompletedProcess:
    command = [sys.executable, "manage.py", "check", "--deploy", "--fail-level", "WARNING"]
    return subprocess.run(command, cwd=ROOT, env=clean_env(**env), capture_output=True, text=True)


def test_check_deploy_is_clean_with_the_production_settings():
    done = check_deploy(**PRODUCTION)
    assert done.returncode == 0, done.stdout + done.stderr
    assert "System check identified no issues" in done.stdout


def test_check_deploy_names_what_is_missing_without_them():
    # The same command fails on the bare defaults, so the test above could fail.
    done = check_deploy(SECRET_KEY=KEY)
    assert done.returncode != 0
    for warning in ("security.W004", "security.W008", "security.W012", "security.W016"):
        assert warning in done.stderr


def test_portfolio_runs_default_to_the_database_queue():
    values = read_settings("TASKS", "PORTFOLIO_CHUNK_ITEMS", "PORTFOLIO_LEASE_SECONDS", "INSTALLED_APPS", DEBUG="1")
    assert values["TASKS"]["default"]["BACKEND"] == "django_tasks_db.DatabaseBackend"
    assert {"django_tasks", "django_tasks_db"} <= set(values["INSTALLED_APPS"])
    assert values["PORTFOLIO_CHUNK_ITEMS"] == 200 and values["PORTFOLIO_LEASE_SECONDS"] == 60
    immediate = read_settings("TASKS", DEBUG="1", PLANNER_TASKS_BACKEND="immediate")["TASKS"]
    assert immediate["default"]["BACKEND"] == "django_tasks.backends.immediate.ImmediateBackend"
