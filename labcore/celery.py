"""The Celery app. Broker and backend come from Django settings (CELERY_* names)."""
import os

from celery import Celery

os.environ.setdefault("DJANGO_SETTINGS_MODULE", "labcore.settings")

app = Celery("labcore")
app.config_from_object("django.conf:settings", namespace="CELERY")
app.autodiscover_tasks()

from labcore.task_signals import WorkerHeartbeat  # noqa: E402  (also connects task metrics and request ids)

app.steps["consumer"].add(WorkerHeartbeat)
