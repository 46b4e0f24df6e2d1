"""Celery tasks: thin wrappers that take ids, call one service, and own their retries.

Every task is safe to run twice: the services they call change nothing twice (alerts
are keyed by episode, pulls are created once, notifications remember what was sent).
"""
from __future__ import annotations

from celery import shared_task
from django.conf import settings
from django.db import InterfaceError, OperationalError

from analyses.services.alert_delivery import alert_notify, alerts_pending_notification
from analyses.services.audit_anchors import audit_anchor_write
from analyses.services.due_scan import traceability_due_scan
from analyses.services.stability import stability_pulls_schedule, stability_studies_evaluate, stability_study_evaluate
from analyses.services.trend_scan import trend_scan

# Retry what may pass (a database that is restarting); a domain error would only repeat.
TRANSIENT = (OperationalError, InterfaceError)
# A worker holds a retry unacknowledged until its countdown ends; on Redis a countdown longer than
# the visibility timeout would have the message delivered again meanwhile (Celery's Redis caveats).
BACKOFF_MAX = max(1, min(600, int(settings.BROKER_VISIBILITY_TIMEOUT * 0.8)))
RETRY = {"acks_late": True, "autoretry_for": TRANSIENT, "retry_backoff": 5, "retry_backoff_max": BACKOFF_MAX, "max_retries": 8}


@shared_task(name="analyses.tasks.trend_scan_task", **RETRY)
def trend_scan_task(series_keys: list[str] | None = None) -> dict:
    return trend_scan(series_keys).__dict__


@shared_task(name="analyses.tasks.stability_pulls_schedule_task", **RETRY)
def stability_pulls_schedule_task() -> dict:
    return stability_pulls_schedule().__dict__


@shared_task(name="analyses.tasks.stability_study_evaluate_task", **RETRY)
def stability_study_evaluate_task(study_id: int) -> dict:
    return {"study": study_id, "alerts_raised": stability_study_evaluate(study_id).alerts_raised}


@shared_task(name="analyses.tasks.stability_studies_evaluate_task", **RETRY)
def stability_studies_evaluate_task() -> int:
    return stability_studies_evaluate()


@shared_task(name="analyses.tasks.traceability_due_scan_task", **RETRY)
def traceability_due_scan_task() -> dict:
    return traceability_due_scan().__dict__


@shared_task(name="analyses.tasks.alert_notify_task", **RETRY)
def alert_notify_task(alert_id: int) -> dict:
    """One delivery attempt; a failed send is recorded with its next attempt time, and
    alerts_notify_pending_task retries it then (the only retry, so chains never multiply)."""
    outcome = alert_notify(alert_id)
    return {"alert": outcome.alert_id, "owed": outcome.owed, "errors": list(outcome.errors)}


@shared_task(name="analyses.tasks.alerts_notify_pending_task", acks_late=True)
def alerts_notify_pending_task() -> int:
    """Queue every alert owed an e-mail or webhook whose next attempt is due."""
    pending = alerts_pending_notification()
    for alert_id in pending:
        alert_notify_task.delay(alert_id)
    return len(pending)


@shared_task(name="analyses.tasks.audit_anchor_task", **RETRY)
def audit_anchor_task() -> dict:
    """Record the audit chain's head outside the database (when it moved and still holds)."""
    return audit_anchor_write().__dict__
