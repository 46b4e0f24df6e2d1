"""Quick start: migrate, load the invented demo refinery, and run the web server with a
real Celery worker and beat scheduler beside it (filesystem broker in var/ unless REDIS_URL is set)."""
from __future__ import annotations

import signal
import subprocess
import sys

from django.conf import settings
from django.core.management import call_command
from django.core.management.base import BaseCommand


class Command(BaseCommand):
    help = "Migrate, load the demo data, and run web server, Celery worker and beat together."

    def add_arguments(self, parser):
        parser.add_argument("addrport", nargs="?", default="127.0.0.1:8000")
        parser.add_argument("--no-celery", action="store_true", help="run the web server alone")

    def handle(self, *args, **options):
        self.stdout.write("[1/3] Applying database migrations ...")
        call_command("migrate", interactive=False, verbosity=1)
        self.stdout.write("[2/3] Loading the demo data (invented company) ...")
        call_command("demo_load", new_tokens=True)  # tokens are shown once: fresh ones each start
        workers: list[subprocess.Popen] = []
        if not options["no_celery"]:
            self.stdout.write(f"[3/3] Starting Celery worker and beat (broker: {settings.CELERY_BROKER_URL.split('@')[-1]}) ...")
            base = [sys.executable, "-m", "celery", "-A", "labcore"]
            workers.append(subprocess.Popen(base + ["worker", "--pool=solo", "--loglevel=INFO"]))
            workers.append(subprocess.Popen(base + ["beat", "--loglevel=INFO", "--schedule", settings.CELERY_BEAT_SCHEDULE_FILENAME]))
        # `kill` (SIGTERM) must stop the worker and beat too, as Ctrl-C does
        signal.signal(signal.SIGTERM, lambda signum, frame: sys.exit(0))
        host = options["addrport"]
        self.stdout.write(f"API: http://{host}/api/   docs: http://{host}/api/docs/   (Ctrl-C stops everything)")
        try:
            # the docs pages' scripts come through WhiteNoise (settings.MIDDLEWARE), no --insecure needed
            call_command("runserver", host, use_reloader=False)
        finally:
            for process in workers:
                process.terminate()
            for process in workers:
                try:
                    process.wait(timeout=10)
                except subprocess.TimeoutExpired:
                    process.kill()
