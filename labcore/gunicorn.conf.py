"""gunicorn settings for oleotrace, each from the environment (run: see README, "Run in production").

    gunicorn -c labcore/gunicorn.conf.py labcore.wsgi

GUNICORN_BIND        address to listen on (default 127.0.0.1:8000; behind a proxy)
WEB_CONCURRENCY      worker processes (default 2 x cores + 1)
GUNICORN_THREADS     threads per worker (default 1)
GUNICORN_TIMEOUT     seconds a request may take before its worker is restarted (default 60)
PROMETHEUS_MULTIPROC_DIR  a directory shared with the Celery worker for the metrics of every
                     process (labcore/metrics.py); empty it when the whole stack starts
"""
import multiprocessing
import os

# The web process is a production process: settings require DJANGO_SECRET_KEY and turn HTTPS on.
os.environ.setdefault("OLEOTRACE_PRODUCTION", "1")
os.environ.setdefault("DJANGO_SETTINGS_MODULE", "labcore.settings")

wsgi_app = "labcore.wsgi:application"
bind = os.environ.get("GUNICORN_BIND", "127.0.0.1:8000")
workers = int(os.environ.get("WEB_CONCURRENCY", 2 * multiprocessing.cpu_count() + 1))
threads = int(os.environ.get("GUNICORN_THREADS", 1))
timeout = int(os.environ.get("GUNICORN_TIMEOUT", 60))
graceful_timeout = 30
# Restart a worker now and then so a slow leak cannot grow without bound.
max_requests = int(os.environ.get("GUNICORN_MAX_REQUESTS", 2000))
max_requests_jitter = max_requests // 10
# Django loads once in the arbiter; workers fork from it (start-up cost paid once).
preload_app = True
accesslog = None  # the application logs each request as a JSON line (labcore.metrics middleware)
errorlog = "-"
loglevel = os.environ.get("GUNICORN_LOG_LEVEL", "info")
# gunicorn 24+ opens a control socket in the home directory; the service needs none
control_socket_disable = True
forwarded_allow_ips = os.environ.get("FORWARDED_ALLOW_IPS", "127.0.0.1")


def child_exit(server, worker):
    if os.environ.get("PROMETHEUS_MULTIPROC_DIR"):
        from prometheus_client import multiprocess

        multiprocess.mark_process_dead(worker.pid)
