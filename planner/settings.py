"""Settings for the planner, every one from the environment with a stated default.

DEBUG           "1"/"0", default "0": debug pages only when the environment asks for them
SECRET_KEY      required (32+ characters) when DEBUG is off; a fixed development key otherwise.
                `make run` keeps a generated local key in .secret_key (git-ignored).
DATABASE_URL    default: SQLite file db.sqlite3 beside manage.py
ALLOWED_HOSTS   comma-separated, default "localhost,127.0.0.1,[::1]"
PLANNER_COMPUTE_CAP  largest work one web request computes, in walkmath cost units, default 1200000000
"""

import os
from pathlib import Path

import dj_database_url
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

ALLOWED_HOSTS = [
    h.strip() for h in os.environ.get("ALLOWED_HOSTS", "localhost,127.0.0.1,[::1]").split(",") if h.strip()
]

INSTALLED_APPS = [
    "django.contrib.admin",
    "django.contrib.auth",
    "django.contrib.contenttypes",
    "django.contrib.sessions",
    "django.contrib.messages",
    "whitenoise.runserver_nostatic",
    "django.contrib.staticfiles",
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
        else {"ENGINE": "django.db.backends.sqlite3", "NAME": BASE_DIR / "db.sqlite3"}
    }
except ValueError as exc:
    raise ImproperlyConfigured(f"DATABASE_URL is malformed: {exc}") from exc

DEFAULT_AUTO_FIELD = "django.db.models.BigAutoField"

AUTH_PASSWORD_VALIDATORS = [
    {"NAME": "django.contrib.auth.password_validation.MinimumLengthValidator"},
    {"NAME": "django.contrib.auth.password_validation.CommonPasswordValidator"},
]

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


def _whole(name: str, default: str) -> int:
    value = os.environ.get(name, default).strip()
    if not value.isdigit() or int(value) < 1:
        raise ImproperlyConfigured(f"{name} must be a whole number at least 1; got {value!r}")
    return int(value)


# Largest work one web request computes, in the engine's cost units (level·period·jump, walkmath.cost;
# measured about 1.5e9 a second here), summed over every engine call the page makes. The default keeps the
# most expensive page a signed-in user can ask for under about 2 s (README, "Settings").
PLANNER_COMPUTE_CAP = _whole("PLANNER_COMPUTE_CAP", "1200000000")
