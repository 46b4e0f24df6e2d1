"""Alerts: raised once per episode and acknowledged by QA (delivery: ``alert_delivery``)."""
from __future__ import annotations

import logging
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

from django.db import transaction
from django.utils import timezone

from analyses.audit import audit_append, created
from analyses.errors import Conflict
from analyses.models import Alert, AlertSeverity, AlertState, AuditAction
from analyses.services.access import Actor, fetch, require_permission, required_text
from analyses.services.alert_texts import alert_chart_url, alert_rule_in_words
from analyses.services.background import enqueue_on_commit
from analyses.services.system import scheduler_actor
from labcore.metrics import ALERTS_RAISED, count_on_commit

logger = logging.getLogger(__name__)

ALERT_FIELDS = ("source", "rule", "severity", "series_key", "episode_key", "message", "method_code")
NOTIFY_TASK = "analyses.tasks.alert_notify_task"
KEY_BATCH = 500  # episode keys per look-up (SQLite allows only so many query parameters)


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


def alerts_raise(drafts: Sequence[AlertDraft], actor: Actor = None) -> list[Alert]:
    """Store the drafts whose episode has no alert yet and queue their notification;
    returns the new alerts only. ``actor`` defaults to the scheduler's account."""
    if not drafts:
        return []
    actor = actor or scheduler_actor()
    unique: dict[str, AlertDraft] = {}
    for draft in drafts:
        unique.setdefault(draft.episode_key, draft)
    keys = list(unique)
    known: set[str] = set()
    for start in range(0, len(keys), KEY_BATCH):
        known.update(Alert.objects.filter(episode_key__in=keys[start:start + KEY_BATCH]).values_list("episode_key", flat=True))
    now = timezone.now()
    raised = []
    for key in keys:
        if key in known:
            continue
        # One transaction per alert, its insert before the audit chain's lock: scans running
        # at once with the same episodes in other orders would otherwise deadlock, each
        # holding the chain while waiting on an episode key the other inserted.
        with transaction.atomic():
            # get_or_create, not insert: a scan running at the same time may have raised it first
            alert, made = Alert.objects.get_or_create(episode_key=key, defaults={"raised_at": now, **unique[key].__dict__})
            if made:
                audit_append(actor, AuditAction.CREATE, alert, created(alert, ALERT_FIELDS), lot_ref=alert.lot_id)
                enqueue_on_commit(NOTIFY_TASK, alert.pk)
                count_on_commit(ALERTS_RAISED, source=alert.source)
                raised.append(alert)
    return raised


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
    """The webhook's body: the alert, its rule in words and the link to its chart."""
    return {
        "id": alert.pk,
        "source": alert.source,
        "rule": alert.rule,
        "rule_in_words": alert_rule_in_words(alert),
        "severity": alert.severity,
        "series": alert.series_key,
        "method": alert.method_code or None,
        "product": alert.product.code if alert.product_id else None,
        "lot": alert.lot.code if alert.lot_id else None,
        "study": alert.study.code if alert.study_id else None,
        "message": alert.message,
        "chart_url": alert_chart_url(alert),
        "points": alert.points,
        "raised_at": alert.raised_at.isoformat(),
    }
