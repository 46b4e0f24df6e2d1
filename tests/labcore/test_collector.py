"""The web process settles Python's garbage collector once loaded (labcore/collector.py, issue 12)."""
from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]

LOAD_WSGI = """
import gc, json, sys
import labcore.wsgi
print(json.dumps({
    "frozen": gc.get_freeze_count(),
    "threshold": gc.get_threshold(),
    "views_loaded": "analyses.api.views.results" in sys.modules,
}))
"""


def _load_wsgi(tmp_path, **env: str) -> dict:
    environment = {**os.environ, "DJANGO_SETTINGS_MODULE": "labcore.settings", "OLEOTRACE_VAR_DIR": str(tmp_path), **env}
    if "GC_YOUNG_THRESHOLD" not in env:
        environment.pop("GC_YOUNG_THRESHOLD", None)
    done = subprocess.run([sys.executable, "-c", LOAD_WSGI], cwd=ROOT, env=environment, capture_output=True, text=True, timeout=180)
    assert done.returncode == 0, done.stderr
    return json.loads(done.stdout.strip().splitlines()[-1])


def test_loading_the_wsgi_application_freezes_what_it_loaded_with_every_view(tmp_path):
    loaded = _load_wsgi(tmp_path)
    assert loaded["views_loaded"]  # the URLconf is loaded before the freeze, not in each worker's first request
    assert loaded["frozen"] > 10_000  # Django, DRF and the plugins: tens of thousands of objects
    assert loaded["threshold"][0] == 10_000  # the default of GC_YOUNG_THRESHOLD


def test_the_young_generations_threshold_comes_from_the_environment(tmp_path):
    assert _load_wsgi(tmp_path, GC_YOUNG_THRESHOLD="25000")["threshold"][0] == 25_000


LOAD_WSGI_CONNECTED = """
import json, django
django.setup()
from django.db import connection
connection.ensure_connection()  # as if something had queried while the application loaded
import labcore.wsgi
print(json.dumps({"open_after_load": connection.connection is not None}))
"""


def test_the_loaded_application_holds_no_database_connection_for_the_workers_to_share(tmp_path):
    """gunicorn forks its workers from the loaded application (preload_app); a connection
    open then would be one socket shared by every worker, now that workers keep theirs."""
    environment = {**os.environ, "DJANGO_SETTINGS_MODULE": "labcore.settings", "OLEOTRACE_VAR_DIR": str(tmp_path)}
    done = subprocess.run([sys.executable, "-c", LOAD_WSGI_CONNECTED], cwd=ROOT, env=environment, capture_output=True, text=True, timeout=180)
    assert done.returncode == 0, done.stderr
    assert json.loads(done.stdout.strip().splitlines()[-1]) == {"open_after_load": False}
