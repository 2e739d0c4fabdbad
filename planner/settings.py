"""Settings for the planner, every one from the environment with a stated default.

DEBUG           "1"/"0", default "0": debug pages only when the environment asks for them
SECRET_KEY      required (32+ characters) when DEBUG is off; a fixed development key otherwise.
                `make run` keeps a generated local key in .secret_key (git-ignored).
DATABASE_URL    default: SQLite file db.sqlite3 beside manage.py
ALLOWED_HOSTS   comma-separated, default "localhost,127.0.0.1,[::1]"
PLANNER_COMPUTE_CAP  largest work one web request computes, in walkmath cost units, default 5000000000
PLANNER_BACKGROUND_CAP  largest work of one saved plan a background worker computes when a page cannot,
                     in walkmath cost units, default 20000000000 (the engine's own cap); the plan's page
                     shows a progress bar meanwhile (README, "Large plans")
OPENBLAS_NUM_THREADS BLAS threads in each process, default 1: web and background workers each take a core
                     already, and more BLAS threads than cores make them wait for one another (read by
                     numpy when it is first imported, which is after these settings)

Portfolio runs (README, "Portfolio runs"):
PLANNER_TASKS_BACKEND      "database" (default: a queue in the database, worked by `manage.py db_worker`
                           processes; `make run` starts one) or "immediate" (work out a run inside the
                           request that starts it: no worker, for a quick look only)
PORTFOLIO_CHUNK_ITEMS      items in one chunk (one background task), default 200
PORTFOLIO_LEASE_SECONDS    seconds a chunk's worker may stay silent before the chunk is handed out again,
                           default 60 (a working worker signs every third of it)
PORTFOLIO_MAX_ATTEMPTS     tries of one chunk before its rows are written as not worked out, default 3
PORTFOLIO_ITEM_CAP         largest work of one item, in walkmath cost units, default 20000000000 (the
                           engine's own cap); an item over it is reported, not run

Behind TLS (README, "Deployment"); every default suits plain local http (`make run`):
SECURE_SSL_REDIRECT             1/0, default 0: redirect http to https
SESSION_COOKIE_SECURE           1/0, default 0: send the session cookie over https only
CSRF_COOKIE_SECURE              1/0, default 0: send the CSRF cookie over https only
SECURE_HSTS_SECONDS             whole seconds, default 0 (no Strict-Transport-Security header)
SECURE_HSTS_INCLUDE_SUBDOMAINS  1/0, default 0
SECURE_HSTS_PRELOAD             1/0, default 0
CSRF_TRUSTED_ORIGINS            comma-separated origins with their scheme ("https://planner.example"), default none
SECURE_PROXY_SSL_HEADER         "HEADER,value" as the proxy sets it, e.g. "HTTP_X_FORWARDED_PROTO,https";
                                default none (only a proxy that always sets or strips that header may be trusted)
PLANNER_PROXY_COUNT             how many proxies in front of the app append to X-Forwarded-For, default 0
                                (the sign-in throttle then counts the address the last of them saw)
AXES_FAILURE_LIMIT              failed sign-ins before a lockout, per account and per address, default 10
AXES_COOLOFF_TIME               hours a lockout lasts, default 0.25 (15 minutes)
"""

import os
from pathlib import Path

os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")

import dj_database_url  # noqa: E402
from django.core.exceptions import ImproperlyConfigured

BASE_DIR = Path(__file__).resolve().parent.parent

_DEV_KEY = "dev-only-key-not-for-production"


def _flag(name: str, default: str) -> bool:
    value = os.environ.get(name, default).strip().lower()
    if value not in {"1", "0", "true", "false", "yes", "no", "on", "off"}:
        raise ImproperlyConfigured(f"{name} must be 1 or 0 (or true/false); got {value!r}")
    return value in {"1", "true", "yes", "on"}


DEBUG = _flag("DEBUG", "0")
SECRET_KEY = os.environ.get("SECRET_KEY", "" if not DEBUG else _DEV_KEY)
if not DEBUG and (not SECRET_KEY or SECRET_KEY == _DEV_KEY or len(SECRET_KEY) < 32):
    raise ImproperlyConfigured("SECRET_KEY must be set to a random string of 32+ characters when DEBUG is off")


def _list(name: str, default: str) -> list[str]:
    return [item.strip() for item in os.environ.get(name, default).split(",") if item.strip()]


def _whole(name: str, default: str, *, least: int = 1) -> int:
    value = os.environ.get(name, default).strip()
    if not value.isdigit() or int(value) < least:
        raise ImproperlyConfigured(f"{name} must be a whole number at least {least}; got {value!r}")
    return int(value)


def _hours(name: str, default: str) -> float:
    value = os.environ.get(name, default).strip()
    try:
        hours = float(value)
    except ValueError:
        hours = -1.0
    if not 0 < hours <= 24 * 30:
        raise ImproperlyConfigured(f"{name} must be a number of hours above 0 and at most 720; got {value!r}")
    return hours


def _origins(name: str) -> list[str]:
    origins = _list(name, "")
    for origin in origins:
        if not origin.startswith(("https://", "http://")) or "/" in origin.split("://", 1)[1]:
            raise ImproperlyConfigured(
                f"{name} must list origins such as https://planner.example (scheme and host, no path); got {origin!r}"
            )
    return origins


def _proxy_header(name: str) -> tuple[str, str] | None:
    value = os.environ.get(name, "").strip()
    if not value:
        return None
    header, _, expected = (part.strip() for part in value.partition(","))
    if not header.startswith("HTTP_") or not expected or "," in expected:
        raise ImproperlyConfigured(
            f"{name} must be HEADER,value with the header as Django names it, e.g. HTTP_X_FORWARDED_PROTO,https; "
            f"got {value!r}"
        )
    return header, expected


ALLOWED_HOSTS = _list("ALLOWED_HOSTS", "localhost,127.0.0.1,[::1]")

# TLS and the proxy in front (defaults: plain local http, as `make run` serves).
SECURE_SSL_REDIRECT = _flag("SECURE_SSL_REDIRECT", "0")
SESSION_COOKIE_SECURE = _flag("SESSION_COOKIE_SECURE", "0")
CSRF_COOKIE_SECURE = _flag("CSRF_COOKIE_SECURE", "0")
SECURE_HSTS_SECONDS = _whole("SECURE_HSTS_SECONDS", "0", least=0)
SECURE_HSTS_INCLUDE_SUBDOMAINS = _flag("SECURE_HSTS_INCLUDE_SUBDOMAINS", "0")
SECURE_HSTS_PRELOAD = _flag("SECURE_HSTS_PRELOAD", "0")
CSRF_TRUSTED_ORIGINS = _origins("CSRF_TRUSTED_ORIGINS")
SECURE_PROXY_SSL_HEADER = _proxy_header("SECURE_PROXY_SSL_HEADER")
PLANNER_PROXY_COUNT = _whole("PLANNER_PROXY_COUNT", "0", least=0)

# Every page loads its scripts, styles, images and data from this site only and runs no inline script
# (planner/security.py sends it, adding the hashes of the few inline <style> elements it allows and saying
# why plotly needs style attributes). plotly's image download makes data: and blob: images.
CONTENT_SECURITY_POLICY = {
    "default-src": "'self'",
    "script-src": "'self'",
    "style-src": "'self'",
    "style-src-elem": "'self'",
    "style-src-attr": "'unsafe-inline'",
    "img-src": "'self' data: blob:",
    "font-src": "'self'",
    "connect-src": "'self'",
    "object-src": "'none'",
    "base-uri": "'none'",
    "form-action": "'self'",
    "frame-ancestors": "'none'",
}

INSTALLED_APPS = [
    "django.contrib.admin",
    "django.contrib.auth",
    "django.contrib.contenttypes",
    "django.contrib.sessions",
    "django.contrib.messages",
    "whitenoise.runserver_nostatic",
    "django.contrib.staticfiles",
    "axes",
    "django_tasks",
    "django_tasks_db",
    "ninja",  # serves the API documentation page's scripts from our static files (no CDN)
    "planner",
]

MIDDLEWARE = [
    "django.middleware.security.SecurityMiddleware",
    "whitenoise.middleware.WhiteNoiseMiddleware",
    "django.contrib.sessions.middleware.SessionMiddleware",
    "django.middleware.common.CommonMiddleware",
    "django.middleware.csrf.CsrfViewMiddleware",
    "django.contrib.auth.middleware.AuthenticationMiddleware",
    "django.contrib.messages.middleware.MessageMiddleware",
    "django.middleware.clickjacking.XFrameOptionsMiddleware",
    "planner.security.ContentSecurityPolicyMiddleware",
    # Last, as django-axes asks: it turns a lockout recorded during sign-in into the lockout page.
    "axes.middleware.AxesMiddleware",
]

ROOT_URLCONF = "planner.urls"
WSGI_APPLICATION = "planner.wsgi.application"

TEMPLATES = [
    {
        "BACKEND": "django.template.backends.django.DjangoTemplates",
        "DIRS": [BASE_DIR / "templates"],
        "APP_DIRS": True,
        "OPTIONS": {
            "context_processors": [
                "django.template.context_processors.request",
                "django.contrib.auth.context_processors.auth",
                "django.contrib.messages.context_processors.messages",
            ],
        },
    },
]

_database_url = os.environ.get("DATABASE_URL", "").strip()
try:
    DATABASES = {
        "default": dj_database_url.parse(_database_url, conn_max_age=60)
        if _database_url
        else {
            "ENGINE": "django.db.backends.sqlite3",
            "NAME": BASE_DIR / "db.sqlite3",
            # Each worker keeps its connection between requests, as with DATABASE_URL: opening one (Django
            # registers its SQL functions on every new SQLite connection) cost about 1 ms of CPU a request.
            "CONN_MAX_AGE": 60,
            # The web server and the local worker share the file: writers wait for each other (timeout, in
            # seconds) and take the write lock when a transaction begins (IMMEDIATE), so a transaction that
            # reads then writes is never refused halfway.
            "OPTIONS": {"timeout": 30, "transaction_mode": "IMMEDIATE"},
        }
    }
except ValueError as exc:
    raise ImproperlyConfigured(f"DATABASE_URL is malformed: {exc}") from exc

DEFAULT_AUTO_FIELD = "django.db.models.BigAutoField"

AUTH_PASSWORD_VALIDATORS = [
    {"NAME": "django.contrib.auth.password_validation.MinimumLengthValidator"},
    {"NAME": "django.contrib.auth.password_validation.CommonPasswordValidator"},
]

# Sign-in throttling (django-axes, a database record per failing account and address, so every worker
# and every machine sees the same count): after AXES_FAILURE_LIMIT failures from one address, or for one
# account, sign-in from that address or to that account is refused for AXES_COOLOFF_TIME hours, the right
# password included. Failures during a lockout are not counted and do not extend it, so someone guessing
# at an account keeps its owner out for at most AXES_COOLOFF_TIME after their last counted guess.
AUTHENTICATION_BACKENDS = [
    "axes.backends.AxesStandaloneBackend",
    "django.contrib.auth.backends.ModelBackend",
]
AXES_FAILURE_LIMIT = _whole("AXES_FAILURE_LIMIT", "10")
AXES_COOLOFF_TIME = _hours("AXES_COOLOFF_TIME", "0.25")
AXES_LOCKOUT_PARAMETERS = ["username", "ip_address"]  # each counted on its own
AXES_RESET_COOL_OFF_ON_FAILURE_DURING_LOCKOUT = False
AXES_LOCKOUT_TEMPLATE = "registration/locked_out.html"
AXES_CLIENT_IP_CALLABLE = "planner.security.client_address"
AXES_DISABLE_ACCESS_LOG = True  # successful sign-ins are not logged; failures are (admin, "Access attempts")

# Database sessions as Django keeps them, read with a statement compiled once (planner/sessions.py).
SESSION_ENGINE = "planner.sessions"

LOGIN_URL = "login"
LOGIN_REDIRECT_URL = "/"
LOGOUT_REDIRECT_URL = "login"

LANGUAGE_CODE = "en-gb"
TIME_ZONE = "UTC"
USE_I18N = True
USE_TZ = True

STATIC_URL = "static/"
STATIC_ROOT = BASE_DIR / "staticfiles"
STORAGES = {
    "default": {"BACKEND": "django.core.files.storage.FileSystemStorage"},
    "staticfiles": {
        "BACKEND": "django.contrib.staticfiles.storage.StaticFilesStorage"
        if DEBUG
        else "whitenoise.storage.CompressedManifestStaticFilesStorage"
    },
}


# Largest work one web request computes, in the engine's cost units (level·period·jump, walkmath.cost;
# the sweeps run at 5e9 to 2.5e10 a second here), summed over every engine call the page makes. The default
# keeps the most expensive page a signed-in user can ask for under about 2 s (README, "Settings";
# `manage.py bench_whatif --worst`).
PLANNER_COMPUTE_CAP = _whole("PLANNER_COMPUTE_CAP", "5000000000")
# A saved plan over PLANNER_COMPUTE_CAP but within this is worked out by a background worker (planner/background/).
PLANNER_BACKGROUND_CAP = _whole("PLANNER_BACKGROUND_CAP", "20000000000")

_TASK_BACKENDS = {
    "database": "django_tasks_db.DatabaseBackend",
    "immediate": "django_tasks.backends.immediate.ImmediateBackend",
}
_tasks_backend = os.environ.get("PLANNER_TASKS_BACKEND", "database").strip()
if _tasks_backend not in _TASK_BACKENDS:
    raise ImproperlyConfigured(f"PLANNER_TASKS_BACKEND must be database or immediate; got {_tasks_backend!r}")
# "benchmark": the queue `manage.py bench_portfolio` uses, so its workers take nothing else.
TASKS = {"default": {"BACKEND": _TASK_BACKENDS[_tasks_backend], "QUEUES": ["default", "benchmark"]}}

PORTFOLIO_CHUNK_ITEMS = _whole("PORTFOLIO_CHUNK_ITEMS", "200")
PORTFOLIO_LEASE_SECONDS = _whole("PORTFOLIO_LEASE_SECONDS", "60")
PORTFOLIO_MAX_ATTEMPTS = _whole("PORTFOLIO_MAX_ATTEMPTS", "3")
PORTFOLIO_ITEM_CAP = _whole("PORTFOLIO_ITEM_CAP", "20000000000")
