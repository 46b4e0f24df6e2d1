"""Alerts: raised once per episode, acknowledged by QA, sent by e-mail and webhook."""
from __future__ import annotations

import json
import logging
import urllib.error
import urllib.request
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

from django.conf import settings
from django.core.mail import send_mail
from django.db import transaction
from django.utils import timezone

from analyses.audit import audit_append, snapshot
from analyses.errors import Conflict
from analyses.models import Alert, AlertSeverity, AlertState, AuditAction
from analyses.services.access import Actor, fetch, require_permission, required_text
from analyses.services.background import enqueue_on_commit
from analyses.services.system import scheduler_actor

logger = logging.getLogger(__name__)

ALERT_FIELDS = ("source", "rule", "severity", "series_key", "episode_key", "message", "method_code")
NOTIFY_TASK = "analyses.tasks.alert_notify_task"


@dataclass(frozen=True)
class AlertDraft:
    source: str
    rule: str
    series_key: str
    episode_key: str
    message: str
    severity: str = AlertSeverity.ALARM
    points: list[dict[str, Any]] = field(default_factory=list)
    method_code: str = ""
    product_id: int | None = None
    lot_id: int | None = None
    study_id: int | None = None


class WebhookFailed(Exception):
    """The webhook did not accept the alert; the task retries it."""


def alerts_raise(drafts: Sequence[AlertDraft], actor: Actor = None) -> list[Alert]:
    """Store the drafts whose episode has no alert yet and queue their notification;
    returns the new alerts only. ``actor`` defaults to the scheduler's account."""
    if not drafts:
        return []
    actor = actor or scheduler_actor()
    keys = {draft.episode_key for draft in drafts}
    known = set(Alert.objects.filter(episode_key__in=keys).values_list("episode_key", flat=True))
    now = timezone.now()
    fresh: dict[str, Alert] = {}
    for draft in drafts:
        if draft.episode_key in known or draft.episode_key in fresh:
            continue
        fresh[draft.episode_key] = Alert(raised_at=now, **draft.__dict__)
    with transaction.atomic():
        created = Alert.objects.bulk_create(list(fresh.values()))  # PostgreSQL and SQLite return ids
        for alert in created:
            audit_append(actor, AuditAction.CREATE, alert, {k: [None, v] for k, v in snapshot(alert, ALERT_FIELDS).items()}, lot_ref=alert.lot_id)
            enqueue_on_commit(NOTIFY_TASK, alert.pk)
    return created


def alert_acknowledge(actor: Actor, alert: Alert | int, *, comment: str) -> Alert:
    """QA acknowledges an open alert with a comment."""
    require_permission(actor, "acknowledge_alert", "acknowledge alerts")
    comment = required_text(comment, "comment")
    with transaction.atomic():
        alert = fetch(Alert, alert, lock=True)
        if alert.state != AlertState.OPEN:
            raise Conflict(f"alert {alert.pk} is already acknowledged by {alert.acknowledged_by}")
        alert.state = AlertState.ACKNOWLEDGED
        alert.acknowledged_by = actor
        alert.acknowledged_at = timezone.now()
        alert.acknowledgement = comment
        alert.save(update_fields=["state", "acknowledged_by", "acknowledged_at", "acknowledgement"])
        audit_append(actor, AuditAction.TRANSITION, alert, {"state": [AlertState.OPEN, AlertState.ACKNOWLEDGED]}, reason=comment, lot_ref=alert.lot_id)
    return alert


def alert_payload(alert: Alert) -> dict[str, Any]:
    return {
        "id": alert.pk,
        "source": alert.source,
        "rule": alert.rule,
        "severity": alert.severity,
        "series": alert.series_key,
        "message": alert.message,
        "points": alert.points,
        "raised_at": alert.raised_at.isoformat(),
    }


def alert_notify(alert_id: int) -> Alert:
    """Send the alert by e-mail (once) and to the webhook, if one is set (until delivered).
    A webhook failure is recorded and raised as WebhookFailed so the task retries; the
    alert itself is never lost."""
    with transaction.atomic():
        alert = fetch(Alert, alert_id, lock=True)
        if alert.emailed_at is None and settings.ALERT_EMAIL_RECIPIENTS:
            send_mail(
                subject=f"[oleotrace] {alert.severity}: {alert.rule} on {alert.series_key}",
                message=alert.message,
                from_email=settings.DEFAULT_FROM_EMAIL,
                recipient_list=settings.ALERT_EMAIL_RECIPIENTS,
            )
            alert.emailed_at = timezone.now()
            alert.save(update_fields=["emailed_at"])
            audit_append(scheduler_actor(), AuditAction.CHANGE, alert, {"emailed_at": [None, alert.emailed_at]}, lot_ref=alert.lot_id)
    url = settings.ALERT_WEBHOOK_URL
    if not url or alert.webhook_delivered_at is not None:
        return alert
    error = _post_json(url, alert_payload(alert))
    with transaction.atomic():
        alert = fetch(Alert, alert_id, lock=True)
        alert.webhook_attempts += 1
        alert.webhook_last_error = error or ""
        if error is None:
            alert.webhook_delivered_at = timezone.now()
        alert.save(update_fields=["webhook_attempts", "webhook_last_error", "webhook_delivered_at"])
        audit_append(
            scheduler_actor(),
            AuditAction.CHANGE,
            alert,
            {"webhook_attempts": [alert.webhook_attempts - 1, alert.webhook_attempts], "webhook_delivered_at": [None, alert.webhook_delivered_at]},
            reason=error or "",
            lot_ref=alert.lot_id,
        )
    if error is not None:
        raise WebhookFailed(f"alert {alert_id}: webhook {url} failed: {error}")
    return alert


def alerts_pending_notification() -> list[int]:
    """Alerts whose e-mail or webhook is still owed (the periodic sweep re-queues them)."""
    owed = Alert.objects.filter(emailed_at__isnull=True) if settings.ALERT_EMAIL_RECIPIENTS else Alert.objects.none()
    if settings.ALERT_WEBHOOK_URL:
        owed = owed | Alert.objects.filter(webhook_delivered_at__isnull=True)
    return list(owed.order_by("id").values_list("id", flat=True).distinct())


def _post_json(url: str, payload: dict[str, Any]) -> str | None:
    request = urllib.request.Request(
        url, data=json.dumps(payload).encode(), headers={"Content-Type": "application/json"}, method="POST"
    )
    try:
        with urllib.request.urlopen(request, timeout=10) as response:
            if 200 <= response.status < 300:
                return None
            return f"HTTP {response.status}"
    except urllib.error.HTTPError as exc:
        return f"HTTP {exc.code}"
    except (urllib.error.URLError, OSError, ValueError) as exc:
        return str(getattr(exc, "reason", exc))
