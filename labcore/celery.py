"""The Celery app. Broker and backend come from Django settings (CELERY_* names)."""
import os

from celery import Celery
from celery.signals import worker_process_init

os.environ.setdefault("DJANGO_SETTINGS_MODULE", "labcore.settings")

app = Celery("labcore")
app.config_from_object("django.conf:settings", namespace="CELERY")
app.autodiscover_tasks()

from labcore.task_signals import WorkerHeartbeat  # noqa: E402  (also connects task metrics and request ids)

app.steps["consumer"].add(WorkerHeartbeat)


@worker_process_init.connect
def _settle_collector(**_) -> None:
    # each prefork child, once forked with the app loaded (labcore/collector.py)
    from labcore.collector import collector_settle

    collector_settle()
