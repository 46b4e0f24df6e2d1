"""WSGI entry point."""
import os

from django.core.wsgi import get_wsgi_application

os.environ.setdefault("DJANGO_SETTINGS_MODULE", "labcore.settings")
application = get_wsgi_application()

from django.urls import get_resolver  # noqa: E402  (after the settings are loaded)

from labcore.collector import collector_settle  # noqa: E402

# gunicorn loads this once in its arbiter (preload_app) and forks the workers from it: load the
# URLconf (every view) here rather than in each worker's first request, then settle the collector
get_resolver().url_patterns
collector_settle()

from django.db import connections  # noqa: E402

# loading opens no connection today; were one opened, the workers forked from here would share
# its socket now that connections are kept between requests (DATABASE_CONN_MAX_AGE)
connections.close_all()
