"""Shared test set-up.

Tests that need a real service (PostgreSQL, Redis) use the ``postgres`` or ``redis_url``
fixtures. On a laptop without them they skip with the reason; with
OLEOTRACE_REQUIRE_SERVICES=1 (set by .ci/run) a missing service fails the run instead.
"""
from __future__ import annotations

import os

import pytest

REQUIRE_SERVICES = os.environ.get("OLEOTRACE_REQUIRE_SERVICES") == "1"


def service_missing(reason: str) -> None:
    if REQUIRE_SERVICES:
        pytest.fail(f"{reason} (OLEOTRACE_REQUIRE_SERVICES=1 turns this skip into a failure)")
    pytest.skip(reason)


def pytest_report_header(config):
    from django.conf import settings

    engine = settings.DATABASES["default"]["ENGINE"]
    return [f"oleotrace: database engine {engine}; REDIS_URL={os.environ.get('REDIS_URL') or '(unset)'}"]


def pytest_sessionstart(session):
    if REQUIRE_SERVICES:
        from django.conf import settings

        engine = settings.DATABASES["default"]["ENGINE"]
        if "postgresql" not in engine:
            raise pytest.UsageError(
                f"OLEOTRACE_REQUIRE_SERVICES=1 but DATABASE_URL selects {engine}; point it at PostgreSQL"
            )


@pytest.fixture(autouse=True)
def _empty_cache():
    """Each test starts with an empty cache, so login failures and request counts (the lock-outs
    and throttles of analyses/login_guard.py and analyses/api/throttles.py) do not leak between tests."""
    from django.core.cache import cache

    cache.clear()
    yield
    cache.clear()


@pytest.fixture
def postgres(db):
    """The test database, when it is a real PostgreSQL server."""
    from django.db import connection

    if connection.vendor != "postgresql":
        service_missing("needs PostgreSQL: set DATABASE_URL=postgres://...")
    return connection


@pytest.fixture(scope="session")
def redis_url() -> str:
    """A reachable Redis server's URL (REDIS_URL)."""
    url = os.environ.get("REDIS_URL")
    if not url:
        service_missing("needs Redis: set REDIS_URL=redis://127.0.0.1:6379/0")
    import redis

    try:
        redis.Redis.from_url(url, socket_connect_timeout=2).ping()
    except redis.exceptions.RedisError as exc:
        service_missing(f"needs Redis at {url}: {exc}")
    return url


@pytest.fixture(autouse=True)
def _quick_password_hashing(settings):
    """Test users have real passwords (they sign releases); MD5 hashes them in microseconds
    where PBKDF2 takes a good fraction of a second (Django's testing docs suggest this)."""
    settings.PASSWORD_HASHERS = ["django.contrib.auth.hashers.MD5PasswordHasher"]


@pytest.fixture(autouse=True)
def _audit_anchors_in_a_temporary_directory(settings, tmp_path_factory):
    """Each test anchors the audit chain in its own directory, never in var/."""
    settings.AUDIT_ANCHOR_DIR = tmp_path_factory.mktemp("audit-anchors")
    settings.AUDIT_ANCHOR_WEBHOOK_URL = ""


AUDIT_GUARDED_TABLES = ("analyses_auditentry", "analyses_auditchainhead")


@pytest.fixture(autouse=True, scope="session")
def _flush_lifts_the_audit_guard():
    """pytest-django empties the database after each transactional test with TRUNCATE, which
    the audit guard (migration 0014) refuses on PostgreSQL: the flush lifts it for that one
    transaction, as DEVELOPERS.md tells an administrator to."""
    from django.db.backends.postgresql.operations import DatabaseOperations

    original = DatabaseOperations.sql_flush

    def sql_flush(self, style, tables, **kwargs):
        statements = original(self, style, tables, **kwargs)
        guarded = [table for table in AUDIT_GUARDED_TABLES if table in tables]
        if not statements or not guarded:
            return statements
        lift = [f"ALTER TABLE {table} DISABLE TRIGGER USER;" for table in guarded]
        restore = [f"ALTER TABLE {table} ENABLE TRIGGER USER;" for table in guarded]
        return lift + statements + restore

    DatabaseOperations.sql_flush = sql_flush
    yield
    DatabaseOperations.sql_flush = original
