"""Production settings come from the environment; `check --deploy` is clean with them set."""
from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]


def production_env(tmp_path, **extra: str) -> dict[str, str]:
    """The variables of deploy/oleotrace.env.example (the README's production list), with the
    database and directories moved into ``tmp_path``."""
    example = (ROOT / "deploy" / "oleotrace.env.example").read_text()
    variables = dict(line.split("=", 1) for line in example.splitlines() if line and not line.startswith("#"))
    env = {k: v for k, v in os.environ.items() if k not in {"DEBUG", "DJANGO_SECRET_KEY", "ALLOWED_HOSTS"}}
    env.update(variables)
    env.update(
        DATABASE_URL=f"sqlite:///{tmp_path / 'deploy.sqlite3'}",
        OLEOTRACE_VAR_DIR=str(tmp_path / "var"),
        STATIC_ROOT=str(tmp_path / "static"),
        AUDIT_ANCHOR_DIR=str(tmp_path / "anchors"),
        PROMETHEUS_MULTIPROC_DIR=str(tmp_path / "metrics"),
    )
    env.update(extra)
    return env


def manage(env: dict[str, str], *args: str) -> subprocess.CompletedProcess:
    return subprocess.run([sys.executable, "manage.py", *args], cwd=ROOT, env=env, capture_output=True, text=True, timeout=300)


def test_check_deploy_is_clean_with_the_production_variables(tmp_path):
    run = manage(production_env(tmp_path), "check", "--deploy", "--fail-level", "WARNING")
    assert run.returncode == 0, run.stdout + run.stderr
    assert "System check identified no issues" in run.stdout


def test_check_deploy_names_what_is_missing_without_them(tmp_path):
    env = production_env(tmp_path, OLEOTRACE_PRODUCTION="0", CSRF_TRUSTED_ORIGINS="", SECURE_HSTS_PRELOAD="0")
    run = manage(env, "check", "--deploy", "--fail-level", "WARNING")
    assert run.returncode != 0
    for warning in ("security.W004", "security.W008", "security.W012", "security.W016"):  # HSTS, SSL redirect, cookies
        assert warning in run.stderr


def test_production_refuses_to_start_without_a_secret_key(tmp_path):
    env = production_env(tmp_path)
    del env["DJANGO_SECRET_KEY"]
    run = manage(env, "check")
    assert run.returncode != 0
    assert "DJANGO_SECRET_KEY is required" in run.stderr
    assert not (tmp_path / "var" / "secret_key").exists()


def test_production_refuses_debug(tmp_path):
    run = manage(production_env(tmp_path, DEBUG="1"), "check")
    assert run.returncode != 0 and "DEBUG must be off" in run.stderr


def test_production_settings_read_from_the_environment(tmp_path):
    code = (
        "from django.conf import settings as s;"
        "print(s.SECURE_SSL_REDIRECT, s.SESSION_COOKIE_SECURE, s.CSRF_COOKIE_SECURE, s.SECURE_HSTS_SECONDS,"
        " s.SECURE_PROXY_SSL_HEADER, s.CSRF_TRUSTED_ORIGINS, s.ALLOWED_HOSTS)"
    )
    env = production_env(tmp_path, ALLOWED_HOSTS="a.example.com,b.example.com", SECURE_HSTS_SECONDS="600")
    run = manage(env, "shell", "-c", code)
    assert run.returncode == 0, run.stderr
    assert run.stdout.strip().splitlines()[-1] == (
        "True True True 600 ('HTTP_X_FORWARDED_PROTO', 'https') ['https://lab.example.com'] ['a.example.com', 'b.example.com']"
    )
