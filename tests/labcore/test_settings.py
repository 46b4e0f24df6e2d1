"""The security limits are read from the environment (README, Configuration)."""
from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]

PRINT_LIMITS = """
import json, django
from django.conf import settings
django.setup()
print(json.dumps({
    "rates": settings.REST_FRAMEWORK["DEFAULT_THROTTLE_RATES"],
    "proxies": settings.REST_FRAMEWORK["NUM_PROXIES"],
    "ttl_seconds": settings.REST_KNOX["TOKEN_TTL"].total_seconds(),
    "login": [settings.LOGIN_FAILURES_PER_ACCOUNT, settings.LOGIN_FAILURES_PER_ADDRESS,
              settings.LOGIN_FAILURE_WINDOW_SECONDS, settings.LOGIN_LOCKOUT_SECONDS],
    "cache": settings.CACHES["default"]["BACKEND"],
}))
"""


def _run(tmp_path, **env: str) -> subprocess.CompletedProcess:
    environment = {**os.environ, "DJANGO_SETTINGS_MODULE": "labcore.settings", "OLEOTRACE_VAR_DIR": str(tmp_path), **env}
    for name in (
        "API_THROTTLE_USER", "API_THROTTLE_ANONYMOUS", "TRUSTED_PROXY_COUNT", "API_TOKEN_TTL_DAYS", "CACHE_URL",
        "LOGIN_FAILURES_PER_ACCOUNT", "LOGIN_FAILURES_PER_ADDRESS", "LOGIN_FAILURE_WINDOW_SECONDS", "LOGIN_LOCKOUT_SECONDS",
    ):
        if name not in env:
            environment.pop(name, None)
    return subprocess.run([sys.executable, "-c", PRINT_LIMITS], cwd=ROOT, env=environment, capture_output=True, text=True, timeout=120)


def _limits(tmp_path, **env: str) -> dict:
    done = _run(tmp_path, **env)
    assert done.returncode == 0, done.stderr
    return json.loads(done.stdout)


def test_the_limits_come_from_the_environment(tmp_path):
    limits = _limits(
        tmp_path, API_THROTTLE_USER="7/hour", API_THROTTLE_ANONYMOUS="3/minute", TRUSTED_PROXY_COUNT="1",
        API_TOKEN_TTL_DAYS="2", LOGIN_FAILURES_PER_ACCOUNT="4", LOGIN_FAILURES_PER_ADDRESS="40",
        LOGIN_FAILURE_WINDOW_SECONDS="300", LOGIN_LOCKOUT_SECONDS="120", CACHE_URL="redis://127.0.0.1:6379/13",
    )
    assert limits["rates"] == {"user": "7/hour", "anon": "3/minute"} and limits["proxies"] == 1
    assert limits["ttl_seconds"] == 2 * 86400 and limits["login"] == [4, 40, 300, 120]
    assert limits["cache"] == "django.core.cache.backends.redis.RedisCache"


def test_the_defaults_ignore_forwarded_for_and_keep_tokens_30_days(tmp_path):
    limits = _limits(tmp_path)
    assert limits["proxies"] == 0 and limits["ttl_seconds"] == 30 * 86400
    assert limits["cache"] == "django.core.cache.backends.locmem.LocMemCache"


def test_a_token_lifetime_that_is_not_positive_stops_the_start(tmp_path):
    done = _run(tmp_path, API_TOKEN_TTL_DAYS="0")
    assert done.returncode != 0 and "API_TOKEN_TTL_DAYS must be a positive number" in done.stderr


PRINT_CONNECTIONS = """
import json, django
from django.conf import settings
django.setup()
database = settings.DATABASES["default"]
print(json.dumps([database["ENGINE"], database["CONN_MAX_AGE"], database["CONN_HEALTH_CHECKS"]]))
"""


def _connections(tmp_path, **env: str) -> subprocess.CompletedProcess:
    environment = {**os.environ, "DJANGO_SETTINGS_MODULE": "labcore.settings", "OLEOTRACE_VAR_DIR": str(tmp_path), **env}
    if "DATABASE_CONN_MAX_AGE" not in env:
        environment.pop("DATABASE_CONN_MAX_AGE", None)
    return subprocess.run([sys.executable, "-c", PRINT_CONNECTIONS], cwd=ROOT, env=environment, capture_output=True, text=True, timeout=120)


def test_postgresql_connections_are_kept_a_minute_and_checked_before_reuse(tmp_path):
    # settings only: nothing connects, so no server is needed
    done = _connections(tmp_path, DATABASE_URL="postgres://nobody@127.0.0.1:1/none")
    assert done.returncode == 0, done.stderr
    assert json.loads(done.stdout) == ["labcore.postgresql", 60, True]
    done = _connections(tmp_path, DATABASE_URL="postgres://nobody@127.0.0.1:1/none", DATABASE_CONN_MAX_AGE="0")
    assert json.loads(done.stdout)[1] == 0


def test_the_demo_database_opens_a_connection_per_request(tmp_path):
    done = _connections(tmp_path, DATABASE_URL="")
    assert done.returncode == 0, done.stderr
    assert json.loads(done.stdout)[:2] == ["django.db.backends.sqlite3", 0]


def test_a_connection_age_that_is_not_a_whole_number_stops_the_start(tmp_path):
    done = _connections(tmp_path, DATABASE_URL="postgres://nobody@127.0.0.1:1/none", DATABASE_CONN_MAX_AGE="1 minute")
    assert done.returncode != 0 and "DATABASE_CONN_MAX_AGE must be a whole number of seconds" in done.stderr
