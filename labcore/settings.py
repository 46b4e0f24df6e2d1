"""Settings, read from the environment.

DATABASE_URL   default: SQLite file in var/ (git-ignored); PostgreSQL when set.
REDIS_URL      Celery broker and result backend; default: a filesystem broker in var/ (no server).
DJANGO_SECRET_KEY  default: a key generated once into var/secret_key, never committed.
DEBUG          off unless set to 1/true/yes.
TRACEABILITY_DUE_DAYS  look-ahead of the daily reagent and instrument due scan; default 14.
"""
from __future__ import annotations

import os
import secrets
from pathlib import Path

import dj_database_url

BASE_DIR = Path(__file__).resolve().parent.parent
VAR_DIR = Path(os.environ.get("OLEOTRACE_VAR_DIR", BASE_DIR / "var"))
VAR_DIR.mkdir(parents=True, exist_ok=True)


def _env_flag(name: str, default: bool = False) -> bool:
    value = os.environ.get(name)
    if value is None:
        return default
    return value.strip().lower() in {"1", "true", "yes", "on"}


def _local_secret_key() -> str:
    key_file = VAR_DIR / "secret_key"
    if not key_file.exists():
        key_file.write_text(secrets.token_urlsafe(50))
        key_file.chmod(0o600)
    return key_file.read_text().strip()


SECRET_KEY = os.environ.get("DJANGO_SECRET_KEY") or _local_secret_key()
DEBUG = _env_flag("DEBUG")
ALLOWED_HOSTS = [h for h in os.environ.get("ALLOWED_HOSTS", "localhost,127.0.0.1,[::1],testserver").split(",") if h]

INSTALLED_APPS = [
    "django.contrib.admin",
    "django.contrib.auth",
    "django.contrib.contenttypes",
    "django.contrib.sessions",
    "django.contrib.messages",
    "django.contrib.staticfiles",
    "rest_framework",
    "rest_framework.authtoken",
    "django_filters",
    "drf_spectacular",
    "drf_spectacular_sidecar",
    "analyses",
]

MIDDLEWARE = [
    "django.middleware.security.SecurityMiddleware",
    "django.contrib.sessions.middleware.SessionMiddleware",
    "django.middleware.common.CommonMiddleware",
    "django.middleware.csrf.CsrfViewMiddleware",
    "django.contrib.auth.middleware.AuthenticationMiddleware",
    "django.contrib.messages.middleware.MessageMiddleware",
    "django.middleware.clickjacking.XFrameOptionsMiddleware",
]

ROOT_URLCONF = "labcore.urls"
WSGI_APPLICATION = "labcore.wsgi.application"

TEMPLATES = [
    {
        "BACKEND": "django.template.backends.django.DjangoTemplates",
        "DIRS": [],
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

DATABASES = {
    "default": dj_database_url.parse(
        os.environ.get("DATABASE_URL") or f"sqlite:///{VAR_DIR / 'oleotrace.sqlite3'}",
        conn_max_age=0,
    )
}
DEFAULT_AUTO_FIELD = "django.db.models.BigAutoField"

LANGUAGE_CODE = "en"
TIME_ZONE = "UTC"
USE_I18N = True
USE_TZ = True
STATIC_URL = "static/"
STATIC_ROOT = VAR_DIR / "static"

REST_FRAMEWORK = {
    "DEFAULT_AUTHENTICATION_CLASSES": [
        "rest_framework.authentication.TokenAuthentication",
        "rest_framework.authentication.SessionAuthentication",
    ],
    "DEFAULT_PERMISSION_CLASSES": ["rest_framework.permissions.IsAuthenticated"],
    "DEFAULT_PAGINATION_CLASS": "rest_framework.pagination.PageNumberPagination",
    "PAGE_SIZE": 50,
    "DEFAULT_FILTER_BACKENDS": ["django_filters.rest_framework.DjangoFilterBackend"],
    "DEFAULT_SCHEMA_CLASS": "drf_spectacular.openapi.AutoSchema",
    "EXCEPTION_HANDLER": "analyses.api.errors.exception_handler",
}

SPECTACULAR_SETTINGS = {
    "TITLE": "oleotrace API",
    "DESCRIPTION": "Edible-oil laboratory backend: method plugins, samples, results, review, release, "
    "stability studies and trend alerts. The software supports decisions; it does not certify them.",
    "VERSION": "0.1.0",
    "SERVE_INCLUDE_SCHEMA": False,
    "COMPONENT_SPLIT_REQUEST": True,
    # The docs pages work offline: their scripts come from the sidecar package, not a CDN.
    "SWAGGER_UI_DIST": "SIDECAR",
    "SWAGGER_UI_FAVICON_HREF": "SIDECAR",
    "REDOC_DIST": "SIDECAR",
}

# Celery: Redis when REDIS_URL is set, otherwise a filesystem broker that needs no server.
REDIS_URL = os.environ.get("REDIS_URL", "")
BROKER_DIR = VAR_DIR / "broker"
if REDIS_URL:
    CELERY_BROKER_URL = REDIS_URL
    CELERY_RESULT_BACKEND = REDIS_URL
    CELERY_BROKER_TRANSPORT_OPTIONS: dict = {"socket_connect_timeout": 2}
    # Give up on a Redis that is down in about a second (the default retries for ~19 s)
    CELERY_RESULT_BACKEND_TRANSPORT_OPTIONS = {
        "retry_policy": {"max_retries": 2, "interval_start": 0, "interval_step": 0.2, "interval_max": 0.5},
        "socket_connect_timeout": 2,
    }
else:
    for sub in ("out", "processed", "control"):
        (BROKER_DIR / sub).mkdir(parents=True, exist_ok=True)
    CELERY_BROKER_URL = "filesystem://"
    CELERY_BROKER_TRANSPORT_OPTIONS = {
        "data_folder_in": str(BROKER_DIR / "out"),
        "data_folder_out": str(BROKER_DIR / "out"),
        "processed_folder": str(BROKER_DIR / "processed"),
        "control_folder": str(BROKER_DIR / "control"),
        "store_processed": False,
    }
    CELERY_RESULT_BACKEND = f"file://{VAR_DIR / 'results'}"
    (VAR_DIR / "results").mkdir(parents=True, exist_ok=True)
CELERY_TASK_ACKS_LATE = True
# Nothing reads task results (the database holds the outcome), and a request must not wait
# on a broker that is down: publish fails fast, and the periodic scans catch up.
CELERY_TASK_IGNORE_RESULT = True
CELERY_TASK_PUBLISH_RETRY_POLICY = {"max_retries": 2, "interval_start": 0, "interval_step": 0.2, "interval_max": 0.5}
CELERY_BROKER_CONNECTION_TIMEOUT = 2
CELERY_TASK_REJECT_ON_WORKER_LOST = True
CELERY_WORKER_PREFETCH_MULTIPLIER = 1
CELERY_TASK_SERIALIZER = "json"
CELERY_ACCEPT_CONTENT = ["json"]
CELERY_TIMEZONE = TIME_ZONE
CELERY_BEAT_SCHEDULE_FILENAME = str(VAR_DIR / "celerybeat-schedule")
# Periodic work; each task is idempotent, so a missed or doubled beat does no harm.
CELERY_BEAT_SCHEDULE = {
    "trend-scan": {"task": "analyses.tasks.trend_scan_task", "schedule": float(os.environ.get("TREND_SCAN_SECONDS", 300))},
    "stability-pulls": {"task": "analyses.tasks.stability_pulls_schedule_task", "schedule": float(os.environ.get("PULL_SCHEDULE_SECONDS", 600))},
    "stability-evaluate": {"task": "analyses.tasks.stability_studies_evaluate_task", "schedule": 3600.0},
    "alerts-notify-pending": {"task": "analyses.tasks.alerts_notify_pending_task", "schedule": 60.0},
    "traceability-due": {"task": "analyses.tasks.traceability_due_scan_task", "schedule": 86400.0},
}
# Calibrations, checks and standardisations falling due, and titrant lots expiring, within this
# many days are raised as alerts by the daily traceability scan.
TRACEABILITY_DUE_DAYS = int(os.environ.get("TRACEABILITY_DUE_DAYS", 14))

# EWMA chart of production series: smoothing λ and limit width L (NIST/SEMATECH typical: 0.2-0.3, 3).
TREND_EWMA_SMOOTHING = float(os.environ.get("TREND_EWMA_SMOOTHING", 0.2))
TREND_EWMA_WIDTH = float(os.environ.get("TREND_EWMA_WIDTH", 3.0))

EMAIL_BACKEND = os.environ.get("EMAIL_BACKEND", "django.core.mail.backends.console.EmailBackend")
DEFAULT_FROM_EMAIL = os.environ.get("DEFAULT_FROM_EMAIL", "oleotrace@localhost")
ALERT_EMAIL_RECIPIENTS = [a for a in os.environ.get("ALERT_EMAIL_RECIPIENTS", "qa@localhost").split(",") if a]
ALERT_WEBHOOK_URL = os.environ.get("ALERT_WEBHOOK_URL", "")

LOGGING = {
    "version": 1,
    "disable_existing_loggers": False,
    "handlers": {"console": {"class": "logging.StreamHandler"}},
    "loggers": {
        "plugins": {"handlers": ["console"], "level": "INFO"},
        "analyses": {"handlers": ["console"], "level": "INFO"},
    },
}
