"""Settings, read from the environment.

DATABASE_URL   default: SQLite file in var/ (git-ignored); PostgreSQL when set.
REDIS_URL      Celery broker and result backend; default: a filesystem broker in var/ (no server).
DJANGO_SECRET_KEY  default: a key generated once into var/secret_key, never committed.
DEBUG          off unless set to 1/true/yes.
OLEOTRACE_PRODUCTION  1 in the production processes (gunicorn sets it): DJANGO_SECRET_KEY is then
               required, and HTTPS settings default on; see "Production" below and the README.
BROKER_VISIBILITY_TIMEOUT  seconds before Redis redelivers a task whose worker died (default 300).
AUDIT_ANCHOR_DIR   where the audit chain's head is anchored (default var/audit-anchors/).
CACHE_URL      the cache that login lock-outs and API throttles count in; default: this process's
               memory. Set a Redis database of its own (redis://host:6379/2) when several processes serve.
LAB_NAME, LAB_ADDRESS, CERTIFICATE_PREFIX  what certificates of analysis name (invented demo defaults).
API_TOKEN_TTL_DAYS, LOGIN_*, API_THROTTLE_*: see "API tokens" and "Login lock-out" below.
TRACEABILITY_DUE_DAYS  look-ahead of the daily reagent and instrument due scan; default 14.
"""
from __future__ import annotations

import os
import secrets
from datetime import timedelta
from pathlib import Path

import dj_database_url
from django.core.exceptions import ImproperlyConfigured

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


def _env_list(name: str, default: str = "") -> list[str]:
    return [item.strip() for item in os.environ.get(name, default).split(",") if item.strip()]


DEBUG = _env_flag("DEBUG")
PRODUCTION = _env_flag("OLEOTRACE_PRODUCTION")
if PRODUCTION and DEBUG:
    raise ImproperlyConfigured("DEBUG must be off when OLEOTRACE_PRODUCTION=1")
if PRODUCTION and not os.environ.get("DJANGO_SECRET_KEY"):
    # a key generated on one host differs on the next and is lost with the disk
    raise ImproperlyConfigured("DJANGO_SECRET_KEY is required when DEBUG is off in production (OLEOTRACE_PRODUCTION=1)")
SECRET_KEY = os.environ.get("DJANGO_SECRET_KEY") or _local_secret_key()
ALLOWED_HOSTS = _env_list("ALLOWED_HOSTS", "" if PRODUCTION else "localhost,127.0.0.1,[::1],testserver")

INSTALLED_APPS = [
    "django.contrib.admin",
    "django.contrib.auth",
    "django.contrib.contenttypes",
    "django.contrib.sessions",
    "django.contrib.messages",
    "django.contrib.staticfiles",
    "rest_framework",
    "knox",
    "django_filters",
    "drf_spectacular",
    "drf_spectacular_sidecar",
    "analyses",
]

MIDDLEWARE = [
    "labcore.request_id.RequestIdMiddleware",  # first: every layer below logs with the request id
    "labcore.metrics_http.RequestMetricsMiddleware",  # times the whole request, under its request id
    "django.middleware.security.SecurityMiddleware",
    "whitenoise.middleware.WhiteNoiseMiddleware",  # static files (API docs) without a separate web server
    "django.contrib.sessions.middleware.SessionMiddleware",
    "django.middleware.common.CommonMiddleware",
    "django.middleware.csrf.CsrfViewMiddleware",
    "django.contrib.auth.middleware.AuthenticationMiddleware",
    "analyses.login_guard.LoginLockoutMiddleware",
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
if DATABASES["default"]["ENGINE"] == "django.db.backends.postgresql":
    # Django's backend, with bulk inserts as VALUES lists (labcore/postgresql/__init__.py says why)
    DATABASES["default"]["ENGINE"] = "labcore.postgresql"
    # Each web worker thread keeps its connection between requests: it is checked before each
    # reuse and closed when a request ends DATABASE_CONN_MAX_AGE seconds after it was opened
    # (0: one connection per request, Django's default). Opening one cost 7 to 15 ms of a
    # request through gunicorn on this machine's own PostgreSQL (README, Run in production).
    # Celery's Django fix-up closes connections around every task whatever this says. SQLite
    # (the demo, under Django's development server) keeps Django's default.
    _conn_max_age = os.environ.get("DATABASE_CONN_MAX_AGE", "60").strip()
    if not _conn_max_age.isdecimal():
        raise ImproperlyConfigured("DATABASE_CONN_MAX_AGE must be a whole number of seconds (0 or more)")
    DATABASES["default"]["CONN_MAX_AGE"] = int(_conn_max_age)
    DATABASES["default"]["CONN_HEALTH_CHECKS"] = True
DEFAULT_AUTO_FIELD = "django.db.models.BigAutoField"

LANGUAGE_CODE = "en"
TIME_ZONE = "UTC"
USE_I18N = True
USE_TZ = True
STATIC_URL = "static/"
STATIC_ROOT = Path(os.environ.get("STATIC_ROOT", VAR_DIR / "static"))
STATIC_ROOT.mkdir(parents=True, exist_ok=True)  # WhiteNoise warns at each start if it is missing
STORAGES = {
    "default": {"BACKEND": "django.core.files.storage.FileSystemStorage"},
    # hashed, compressed copies from `collectstatic`, cached for a year by browsers
    "staticfiles": {
        "BACKEND": "whitenoise.storage.CompressedManifestStaticFilesStorage" if PRODUCTION
        else "django.contrib.staticfiles.storage.StaticFilesStorage",
    },
}
# Without collectstatic (the quick start, tests) WhiteNoise serves from the apps' static folders.
WHITENOISE_USE_FINDERS = not PRODUCTION

# Production: behind a proxy that terminates TLS. Each setting from the environment; in
# production (OLEOTRACE_PRODUCTION=1) the safe value is the default.
CSRF_TRUSTED_ORIGINS = _env_list("CSRF_TRUSTED_ORIGINS")  # e.g. https://lab.example.com
if _env_flag("TRUST_X_FORWARDED_PROTO", PRODUCTION):
    # only behind a proxy that sets this header itself, overwriting what the client sent
    SECURE_PROXY_SSL_HEADER = ("HTTP_X_FORWARDED_PROTO", "https")
SECURE_SSL_REDIRECT = _env_flag("SECURE_SSL_REDIRECT", PRODUCTION)
# probes and the metrics scraper talk plain HTTP inside the network
SECURE_REDIRECT_EXEMPT = [r"^healthz$", r"^readyz$", r"^metrics$"]
SESSION_COOKIE_SECURE = CSRF_COOKIE_SECURE = _env_flag("SECURE_COOKIES", PRODUCTION)
SECURE_HSTS_SECONDS = int(os.environ.get("SECURE_HSTS_SECONDS", 31_536_000 if PRODUCTION else 0))
SECURE_HSTS_INCLUDE_SUBDOMAINS = _env_flag("SECURE_HSTS_INCLUDE_SUBDOMAINS", PRODUCTION)
SECURE_HSTS_PRELOAD = _env_flag("SECURE_HSTS_PRELOAD")

REST_FRAMEWORK = {
    "DEFAULT_AUTHENTICATION_CLASSES": [
        "analyses.api.authentication.ApiTokenAuthentication",
        "rest_framework.authentication.SessionAuthentication",
    ],
    "DEFAULT_PERMISSION_CLASSES": ["rest_framework.permissions.IsAuthenticated"],
    "DEFAULT_PAGINATION_CLASS": "rest_framework.pagination.PageNumberPagination",
    "DEFAULT_METADATA_CLASS": "analyses.api.metadata.InputFieldsMetadata",
    "PAGE_SIZE": 50,
    "DEFAULT_FILTER_BACKENDS": ["django_filters.rest_framework.DjangoFilterBackend"],
    "DEFAULT_SCHEMA_CLASS": "drf_spectacular.openapi.AutoSchema",
    "EXCEPTION_HANDLER": "analyses.api.errors.exception_handler",
    # every caller, signed in or not, is held to a request rate (429 with Retry-After beyond it)
    "DEFAULT_THROTTLE_CLASSES": [
        "analyses.api.throttles.SignedInRateThrottle",
        "analyses.api.throttles.AnonymousRateThrottle",
    ],
    "DEFAULT_THROTTLE_RATES": {
        "user": os.environ.get("API_THROTTLE_USER", "1200/minute"),
        "anon": os.environ.get("API_THROTTLE_ANONYMOUS", "120/minute"),
    },
    # proxies in front of the service that append to X-Forwarded-For; 0 ignores the header (anyone
    # can write it), so a client cannot dodge the per-address limits by inventing addresses
    "NUM_PROXIES": int(os.environ.get("TRUSTED_PROXY_COUNT", 0)),
}

CACHES = {
    "default": (
        {"BACKEND": "django.core.cache.backends.redis.RedisCache", "LOCATION": os.environ["CACHE_URL"]}
        if os.environ.get("CACHE_URL")
        else {"BACKEND": "django.core.cache.backends.locmem.LocMemCache"}
    )
}

# API tokens (django-rest-knox, model analyses.ApiToken): stored as SHA-512 hashes, shown once.
KNOX_TOKEN_MODEL = "analyses.ApiToken"
# knox's own token table is never used (the model above replaces it), but knox's migrations would
# create it anyway, with a foreign key to users that stops test databases being flushed
MIGRATION_MODULES = {"knox": None}
API_TOKEN_TTL_DAYS = float(os.environ.get("API_TOKEN_TTL_DAYS", 30))
if not API_TOKEN_TTL_DAYS > 0:
    raise ImproperlyConfigured("API_TOKEN_TTL_DAYS must be a positive number of days")
REST_KNOX = {
    "TOKEN_TTL": timedelta(days=API_TOKEN_TTL_DAYS),
    "TOKEN_PREFIX": "olt_",  # makes a leaked token easy to recognise (secret scanners, logs)
    "AUTH_HEADER_PREFIX": "Token",
    "AUTO_REFRESH": False,
}

# Allocations between two collections of the youngest generation in the web and worker
# processes (labcore/collector.py; Python's own is 700).
GC_YOUNG_THRESHOLD = int(os.environ.get("GC_YOUNG_THRESHOLD", 10_000))

# Login lock-out (analyses/login_guard.py): after this many failed logins within the window,
# the account (or the client address) is refused for LOGIN_LOCKOUT_SECONDS, with 429.
LOGIN_FAILURES_PER_ACCOUNT = int(os.environ.get("LOGIN_FAILURES_PER_ACCOUNT", 5))
LOGIN_FAILURES_PER_ADDRESS = int(os.environ.get("LOGIN_FAILURES_PER_ADDRESS", 20))
LOGIN_FAILURE_WINDOW_SECONDS = int(os.environ.get("LOGIN_FAILURE_WINDOW_SECONDS", 900))
LOGIN_LOCKOUT_SECONDS = int(os.environ.get("LOGIN_LOCKOUT_SECONDS", 900))
# Django's ModelBackend with the lock-out check first: a locked login is refused before any hashing
AUTHENTICATION_BACKENDS = ["analyses.login_guard.LockoutCheckBackend"]

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
    # the enum hook is drf-spectacular's default; ours documents the 401s and 404s the framework gives
    "POSTPROCESSING_HOOKS": [
        "drf_spectacular.hooks.postprocess_schema_enums",
        "analyses.api.schema.default_responses",
        "analyses.api.schema.integrator_texts",
    ],
}

# Celery: Redis when REDIS_URL is set, otherwise a filesystem broker that needs no server.
REDIS_URL = os.environ.get("REDIS_URL", "")
BROKER_DIR = VAR_DIR / "broker"
# Seconds before Redis hands a message that a worker took but never acknowledged (acks_late: the
# worker was killed outright) to another worker. kombu's default is an hour. Keep it well above the
# longest task (a trend scan of 1,000,000 results takes seconds, README) and above the longest retry
# countdown (analyses/tasks.py caps it below this), or a message still in hand is delivered twice.
BROKER_VISIBILITY_TIMEOUT = float(os.environ.get("BROKER_VISIBILITY_TIMEOUT", 300))
if REDIS_URL:
    CELERY_BROKER_URL = REDIS_URL
    CELERY_RESULT_BACKEND = REDIS_URL
    CELERY_BROKER_TRANSPORT_OPTIONS: dict = {
        "socket_connect_timeout": 2,
        "visibility_timeout": BROKER_VISIBILITY_TIMEOUT,
        # each worker looks for overdue messages every 10 s (kombu's default throttle makes it ~100 s)
        "unacked_restore_interval": 10,
        "unacked_restore_throttle": 1,
    }
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
    "audit-anchor": {"task": "analyses.tasks.audit_anchor_task", "schedule": float(os.environ.get("AUDIT_ANCHOR_SECONDS", 300))},
    "traceability-due": {"task": "analyses.tasks.traceability_due_scan_task", "schedule": 86400.0},
}
# Calibrations, checks and standardisations falling due, and titrant lots expiring, within this
# many days are raised as alerts by the daily traceability scan.
TRACEABILITY_DUE_DAYS = int(os.environ.get("TRACEABILITY_DUE_DAYS", 14))

# Cross-check of AV against FFA x the basis factor on one sample (analyses/services/cross_checks.py): a
# difference above this fraction of the larger value, and above the absolute floor in mg KOH/g, is a
# review warning on both tests. Common practice, no source: two titrations each repeatable to about 5 %
# (ISO 660, Ca 5a-40, from memory) differ by some 7 %; the floor keeps refined oils' small values quiet.
CROSS_CHECK_AV_FFA_RELATIVE = float(os.environ.get("CROSS_CHECK_AV_FFA_RELATIVE", 0.10))
CROSS_CHECK_AV_FFA_ABSOLUTE = float(os.environ.get("CROSS_CHECK_AV_FFA_ABSOLUTE", 0.05))
# titrated against calculated from the composition (ISO 3961 Annex B, AOCS Cd 1c-85): common practice, no source
CROSS_CHECK_IV_ABSOLUTE = float(os.environ.get("CROSS_CHECK_IV_ABSOLUTE", 2.0))  # g I2/100 g
CROSS_CHECK_SV_ABSOLUTE = float(os.environ.get("CROSS_CHECK_SV_ABSOLUTE", 3.0))  # mg KOH/g

# The audit chain's head is appended to a file here (analyses/services/audit_anchors.py); audit_verify
# checks the chain against it. Put it where the database's administrators cannot write.
AUDIT_ANCHOR_DIR = Path(os.environ.get("AUDIT_ANCHOR_DIR", VAR_DIR / "audit-anchors"))
# Optional: each new anchor (and a refusal to write one) is also posted here, e.g. ALERT_WEBHOOK_URL.
AUDIT_ANCHOR_WEBHOOK_URL = os.environ.get("AUDIT_ANCHOR_WEBHOOK_URL", "")

# The laboratory as its certificates of analysis name it (ISO/IEC 17025 §7.8.2.1 b), and the prefix of
# its certificate numbers (<prefix>-<year>-<sequence>). The defaults are an invented demo company.
LAB_NAME = os.environ.get("LAB_NAME", "Marrowvale Oils Ltd, Quality Control Laboratory")
LAB_ADDRESS = os.environ.get("LAB_ADDRESS", "Unit 4, Kestrel Wharf, Marrowvale MV3 8QT, United Kingdom")
CERTIFICATE_PREFIX = os.environ.get("CERTIFICATE_PREFIX", "MVO")

# EWMA chart of production series: smoothing λ and limit width L (NIST/SEMATECH typical: 0.2-0.3, 3).
TREND_EWMA_SMOOTHING = float(os.environ.get("TREND_EWMA_SMOOTHING", 0.2))
TREND_EWMA_WIDTH = float(os.environ.get("TREND_EWMA_WIDTH", 3.0))

# Measurement uncertainty and decision rules (analyses/services/uncertainty.py, verdicts.py):
# the repeatability in each budget, "plugin" (the method's declared r) or "lab_duplicates"
# (pooled from the lab's accepted duplicates, once there are enough); and the lab's opt-in to
# ILAC G8's non-binary statements (conditional pass / conditional fail) on specification lines.
OLEOTRACE_REPEATABILITY_SOURCE = os.environ.get("OLEOTRACE_REPEATABILITY_SOURCE", "plugin")
if OLEOTRACE_REPEATABILITY_SOURCE not in ("plugin", "lab_duplicates"):
    raise ImproperlyConfigured("OLEOTRACE_REPEATABILITY_SOURCE must be plugin or lab_duplicates")
OLEOTRACE_NON_BINARY_STATEMENTS = _env_flag("OLEOTRACE_NON_BINARY_STATEMENTS")
# instrument file import: the largest file taken, in bytes (5 MiB: far above a day's titrator or GC export)
OLEOTRACE_IMPORT_MAX_BYTES = int(os.environ.get("OLEOTRACE_IMPORT_MAX_BYTES", str(5 * 1024 * 1024)))

EMAIL_BACKEND = os.environ.get("EMAIL_BACKEND", "django.core.mail.backends.console.EmailBackend")
DEFAULT_FROM_EMAIL = os.environ.get("DEFAULT_FROM_EMAIL", "oleotrace@localhost")
ALERT_EMAIL_RECIPIENTS = [a for a in os.environ.get("ALERT_EMAIL_RECIPIENTS", "qa@localhost").split(",") if a]
ALERT_WEBHOOK_URL = os.environ.get("ALERT_WEBHOOK_URL", "")
# Where readers reach this service: alert texts, e-mails and webhooks link to charts under it.
OLEOTRACE_BASE_URL = os.environ.get("OLEOTRACE_BASE_URL", "http://localhost:8000").rstrip("/")

# One format on standard error for every line, tagged with the request id ("-" outside a request).
# Django sends unhandled exceptions (django.request, ERROR, with the traceback) only to mail_admins
# when DEBUG is off; the "errors" handler writes them, and any other django ERROR, to stderr too.
LOG_FORMAT = "%(asctime)s %(levelname)s %(name)s [request %(request_id)s] %(message)s"
LOGGING = {
    "version": 1,
    "disable_existing_loggers": False,
    "filters": {
        "request_id": {"()": "labcore.request_id.RequestIdFilter"},
        "require_debug_false": {"()": "django.utils.log.RequireDebugFalse"},
    },
    "formatters": {"service": {"format": LOG_FORMAT}},
    "handlers": {
        "console": {"class": "logging.StreamHandler", "stream": "ext://sys.stderr", "formatter": "service", "filters": ["request_id"]},
        "errors": {"class": "logging.StreamHandler", "stream": "ext://sys.stderr", "level": "ERROR", "formatter": "service", "filters": ["request_id"]},
        "mail_admins": {"class": "django.utils.log.AdminEmailHandler", "level": "ERROR", "filters": ["require_debug_false"]},
    },
    "loggers": {
        "plugins": {"handlers": ["console"], "level": "INFO"},
        "analyses": {"handlers": ["console"], "level": "INFO"},
        "labcore": {"handlers": ["console"], "level": "INFO"},
        "django": {"handlers": ["errors", "mail_admins"], "level": "INFO"},
        # the filter here too, so that the id is on the record itself for any handler (pytest's caplog)
        "django.request": {"filters": ["request_id"], "level": "INFO"},
    },
}

# After a session login (/api/auth/login/) without ?next=: the API root, not Django's /accounts/profile/.
LOGIN_REDIRECT_URL = "api-root"

# Observability (README, "Run in production"). /metrics answers only when enabled, and only to
# "Authorization: Bearer <METRICS_TOKEN>" when a token is set; /readyz calls a worker whose
# heartbeat is older than WORKER_HEARTBEAT_STALE_SECONDS failed.
METRICS_ENABLED = _env_flag("METRICS_ENABLED")
METRICS_TOKEN = os.environ.get("METRICS_TOKEN", "")
WORKER_HEARTBEAT_STALE_SECONDS = float(os.environ.get("WORKER_HEARTBEAT_STALE_SECONDS", 60))

# Logs as JSON lines (labcore/log_format.py) unless LOG_JSON=0, which keeps LOG_FORMAT above; the
# access log is one line per request with route, status, time and user id (labcore/metrics_http.py).
LOGGING["formatters"] = {**LOGGING.get("formatters", {}), "json": {"()": "labcore.log_format.JsonLinesFormatter"}}
if _env_flag("LOG_JSON", True):
    for _handler in LOGGING["handlers"].values():
        if _handler.get("class") == "logging.StreamHandler":
            _handler["formatter"] = "json"
