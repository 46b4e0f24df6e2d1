"""/healthz and /readyz: no authentication, ok or failed per component, nothing more."""
from __future__ import annotations

import time

import pytest
from django.db import OperationalError

from labcore import health
from labcore.heartbeat import heartbeat_age, heartbeat_write


@pytest.fixture
def heartbeat_in_file(settings, tmp_path):
    """Heartbeat in a file of this test's own (the filesystem-broker set-up), not Redis."""
    settings.REDIS_URL = ""
    settings.VAR_DIR = tmp_path


@pytest.fixture
def fresh_migration_check(monkeypatch):
    monkeypatch.setattr(health, "_migrations_applied", False)


def test_healthz_answers_without_authentication(client):
    response = client.get("/healthz")
    assert response.status_code == 200
    assert response.json() == {"status": "ok"}


@pytest.mark.django_db
def test_readyz_is_ok_when_database_migrations_and_broker_are(client, heartbeat_in_file, fresh_migration_check):
    response = client.get("/readyz")
    assert response.status_code == 200, response.content
    body = response.json()
    assert body["status"] == "ok"
    assert body["checks"] == {"database": "ok", "migrations": "ok", "broker": "ok", "worker": "failed"}
    assert body["worker_heartbeat_age_seconds"] is None  # no worker has beaten: reported, not required


@pytest.mark.django_db
def test_readyz_reports_the_worker_heartbeat_age(client, heartbeat_in_file, settings):
    settings.WORKER_HEARTBEAT_STALE_SECONDS = 60
    heartbeat_write(time.time() - 5)
    body = client.get("/readyz").json()
    assert body["checks"]["worker"] == "ok"
    assert 5 <= body["worker_heartbeat_age_seconds"] < 60
    heartbeat_write(time.time() - 600)
    body = client.get("/readyz").json()
    assert body["checks"]["worker"] == "failed" and body["worker_heartbeat_age_seconds"] >= 600
    assert body["status"] == "ok"  # a stale worker does not take the web out of service


@pytest.mark.django_db
def test_readyz_fails_on_a_database_error_without_saying_more(client, heartbeat_in_file, monkeypatch):
    def refuse():
        raise OperationalError("could not connect to server at db.internal:5432 (secret detail)")

    monkeypatch.setattr(health, "database_ok", refuse)
    response = client.get("/readyz")
    assert response.status_code == 503
    assert response.json()["checks"]["database"] == "failed"
    assert response.json()["checks"]["migrations"] == "failed"  # not checked without a database
    assert b"db.internal" not in response.content and b"secret" not in response.content


@pytest.mark.django_db
def test_readyz_fails_when_a_migration_is_not_applied(client, heartbeat_in_file, fresh_migration_check, monkeypatch):
    from django.db.migrations.executor import MigrationExecutor

    monkeypatch.setattr(MigrationExecutor, "migration_plan", lambda self, targets: [("analyses", "9999_pending")])
    response = client.get("/readyz")
    assert response.status_code == 503
    assert response.json()["checks"]["migrations"] == "failed"


@pytest.mark.django_db
def test_readyz_fails_when_the_broker_is_unreachable(client, heartbeat_in_file, monkeypatch):
    from labcore.celery import app

    # nothing listens on port 1; the connection is refused at once
    monkeypatch.setattr(app.conf, "broker_url", "redis://127.0.0.1:1/0")
    response = client.get("/readyz")
    assert response.status_code == 503
    assert response.json()["checks"]["broker"] == "failed"
    assert b"127.0.0.1" not in response.content


def test_heartbeat_in_redis(redis_url, settings):
    settings.REDIS_URL = redis_url
    heartbeat_write(time.time() - 3)
    assert 3 <= heartbeat_age() < 30
