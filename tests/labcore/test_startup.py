"""Fast start-up: everyday management commands load no heavy numerical or plotting library.

Each command runs in a fresh interpreter under ``python -X importtime``, which lists every
module imported; the statistics, plotting and PDF libraries must not be among them (issue 12).
numpy is checked too: nothing these commands do needs it. pint tries ``import numpy`` and
``import scipy`` and is refused (``plugins/pint_import.py``); importtime lists such a refused
attempt as a lone name with no module under it, which is not a load.
"""
from __future__ import annotations

import os
import re
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
HEAVY = {"scipy", "statsmodels", "matplotlib", "pandas", "numpy", "reportlab"}  # reportlab: certificates
IMPORTED = re.compile(r"^import time:\s+(\d+) \|\s+(\d+) \| +([\w.]+)$", re.M)


def imported_modules(*args: str, database_url: str) -> dict[str, bool]:
    """Every module name in the import log, and whether anything was imported under it."""
    env = {**os.environ, "DATABASE_URL": database_url, "PYTHONDONTWRITEBYTECODE": "1"}
    run = subprocess.run(
        [sys.executable, "-X", "importtime", "manage.py", *args],
        cwd=ROOT, env=env, capture_output=True, text=True, timeout=300,
    )
    assert run.returncode == 0, run.stderr[-2000:]
    modules: dict[str, bool] = {}
    for own, cumulative, name in IMPORTED.findall(run.stderr):
        modules[name] = modules.get(name, False) or int(cumulative) > int(own)
    assert "django" in modules  # the import log was read at all
    return modules


def heavy_in(modules: dict[str, bool]) -> list[str]:
    """Heavy modules loaded: any submodule, or a package that imported something itself."""
    return sorted(name for name, has_children in modules.items()
                  if name.split(".")[0] in HEAVY and ("." in name or has_children))


@pytest.fixture
def sqlite_url(tmp_path) -> str:
    return f"sqlite:///{tmp_path / 'startup.sqlite3'}"


def test_calc_imports_no_heavy_library(sqlite_url):
    # a quantity with a unit goes through pint, which imports numpy and scipy if it may
    modules = imported_modules(
        "calc", "sv", "sample_mass=2015 mg", "sample_volume=11.5", "blank_volume=25", "titrant_concentration=0.5",
        "--oil-type", "maize", database_url=sqlite_url,
    )
    assert "pint" in modules
    assert heavy_in(modules) == []


@pytest.mark.parametrize("command", [["methods"], ["check"]])
def test_methods_and_check_import_no_heavy_library(command, sqlite_url):
    assert heavy_in(imported_modules(*command, database_url=sqlite_url)) == []


def test_migrate_and_audit_verify_import_no_heavy_library(sqlite_url):
    assert heavy_in(imported_modules("migrate", "-v", "0", database_url=sqlite_url)) == []
    assert heavy_in(imported_modules("audit_verify", database_url=sqlite_url)) == []




@pytest.mark.parametrize("command, args", [
    ("calc", ["pv", "sample_mass=5", "sample_volume=5", "blank_volume=0", "titrant_concentration=0.01"]),
    ("methods", []),
])
def test_calc_and_methods_still_run_the_plugin_check(command, args, monkeypatch):
    # they skip the URL checks, not the one that concerns them (analyses.W001)
    import io

    from django.core.management import call_command

    from plugins.registry import RejectedPlugin, method_registry

    monkeypatch.setattr(method_registry, "rejected", [RejectedPlugin("broken = acme:Broken", "failed to import")])
    err = io.StringIO()
    call_command(command, *args, skip_checks=False, stdout=io.StringIO(), stderr=err)
    assert "analyses.W001" in err.getvalue() and "broken = acme:Broken" in err.getvalue()
