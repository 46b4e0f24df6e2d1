"""Delivering alerts by e-mail and webhook, retried until delivered and never lost.

One mechanism retries: each attempt records what failed and when the next may run
(``notify_after``, backing off from 1 minute to 1 hour); the periodic sweep queues the
alerts that are owed something and due. An attempt first claims the alert for a few
minutes, so the task queued at commit and the sweep never send the same alert twice.
"""
from __future__ import annotations

import datetime as dt
import json
import urllib.error
import urllib.request
from dataclasses import dataclass
from typing import Any

from django.conf import settings
from django.core.mail import send_mail
from django.db import transaction
from django.db.models import Q
from django.utils import timezone

from analyses.audit import audit_append
from analyses.models import Alert, AuditAction
from analyses.services.access import fetch
from analyses.services.alert_texts import alert_email
from analyses.services.alerts import alert_payload
from analyses.services.system import scheduler_actor
from labcore.metrics import ALERT_DELIVERIES, count_on_commit

CLAIM = dt.timedelta(minutes=5)
FIRST_RETRY = dt.timedelta(minutes=1)
LAST_RETRY = dt.timedelta(hours=1)


@dataclass(frozen=True)
class DeliveryOutcome:
    alert_id: int
    emailed: bool  # sent now
    delivered: bool  # webhook accepted it now
    owed: bool  # something is still to send
    errors: tuple[str, ...] = ()


class _NoRedirect(urllib.request.HTTPRedirectHandler):
    """A redirected POST would arrive as a GET without the alert: treat 3xx as a failure."""

    def redirect_request(self, req, fp, code, msg, headers, newurl):
        return None


_opener = urllib.request.build_opener(_NoRedirect)


def _email_owed(alert: Alert) -> bool:
    return alert.emailed_at is None and bool(settings.ALERT_EMAIL_RECIPIENTS)


def _webhook_owed(alert: Alert) -> bool:
    return alert.webhook_delivered_at is None and bool(settings.ALERT_WEBHOOK_URL)


def retry_delay(failures: int) -> dt.timedelta:
    """1, 2, 4 ... minutes, at most an hour, after the ``failures``-th failed attempt."""
    return min(FIRST_RETRY * 2 ** max(failures - 1, 0), LAST_RETRY)


def alert_notify(alert_id: int) -> DeliveryOutcome:
    """Send what is owed (e-mail once; the webhook until it accepts) and record the outcome.
    Nothing is raised for a failed send: the alert keeps what is owed and when to retry."""
    now = timezone.now()
    with transaction.atomic():
        alert = fetch(Alert, alert_id, lock=True)
        if not (_email_owed(alert) or _webhook_owed(alert)):
            return DeliveryOutcome(alert.pk, False, False, False)
        if alert.notify_after is not None and alert.notify_after > now:
            return DeliveryOutcome(alert.pk, False, False, True)  # claimed by another run, or backing off
        alert.notify_after = now + CLAIM
        alert.save(update_fields=["notify_after"])

    errors: list[str] = []
    emailed = delivered = False
    changes: dict[str, list[Any]] = {}
    if _email_owed(alert):
        try:
            subject, body = alert_email(Alert.objects.select_related("product", "lot", "study").get(pk=alert.pk))
            send_mail(
                subject=subject,
                message=body,
                from_email=settings.DEFAULT_FROM_EMAIL,
                recipient_list=settings.ALERT_EMAIL_RECIPIENTS,
            )
            emailed = True
            changes["emailed_at"] = [None, timezone.now()]
        except (OSError, ValueError) as exc:  # smtplib errors are OSErrors
            errors.append(f"e-mail: {exc}")
    if _webhook_owed(alert):
        error = _post_json(settings.ALERT_WEBHOOK_URL, alert_payload(alert))
        changes["webhook_attempts"] = [alert.webhook_attempts, alert.webhook_attempts + 1]
        if error is None:
            delivered = True
            changes["webhook_delivered_at"] = [None, timezone.now()]
        else:
            errors.append(f"webhook: {error}")

    with transaction.atomic():
        alert = fetch(Alert, alert_id, lock=True)
        if emailed:
            alert.emailed_at = changes["emailed_at"][1]
        if "webhook_attempts" in changes:
            alert.webhook_attempts += 1
            alert.webhook_last_error = next((e for e in errors if e.startswith("webhook")), "")
        if delivered:
            alert.webhook_delivered_at = changes["webhook_delivered_at"][1]
        owed = _email_owed(alert) or _webhook_owed(alert)
        alert.notify_after = timezone.now() + retry_delay(alert.webhook_attempts or 1) if owed else None
        alert.save(update_fields=["emailed_at", "webhook_attempts", "webhook_last_error", "webhook_delivered_at", "notify_after"])
        audit_append(scheduler_actor(), AuditAction.CHANGE, alert, changes, reason="; ".join(errors), lot_ref=alert.lot_id)
        if "emailed_at" in changes or any(e.startswith("e-mail") for e in errors):
            count_on_commit(ALERT_DELIVERIES, channel="email", outcome="delivered" if emailed else "failed")
        if "webhook_attempts" in changes:
            count_on_commit(ALERT_DELIVERIES, channel="webhook", outcome="delivered" if delivered else "failed")
    return DeliveryOutcome(alert.pk, emailed, delivered, owed, tuple(errors))


def alerts_pending_notification(now: dt.datetime | None = None) -> list[int]:
    """Alerts owed an e-mail or a webhook delivery whose next attempt is due."""
    now = now or timezone.now()
    owed = Q(pk__in=[])
    if settings.ALERT_EMAIL_RECIPIENTS:
        owed |= Q(emailed_at__isnull=True)
    if settings.ALERT_WEBHOOK_URL:
        owed |= Q(webhook_delivered_at__isnull=True)
    due = Q(notify_after__isnull=True) | Q(notify_after__lte=now)
    return list(Alert.objects.filter(owed & due).order_by("id").values_list("id", flat=True))


def _post_json(url: str, payload: dict[str, Any]) -> str | None:
    request = urllib.request.Request(
        url, data=json.dumps(payload).encode(), headers={"Content-Type": "application/json"}, method="POST"
    )
    try:
        with _opener.open(request, timeout=10) as response:
            return None if 200 <= response.status < 300 else f"HTTP {response.status}"
    except urllib.error.HTTPError as exc:
        return f"HTTP {exc.code}"
    except (urllib.error.URLError, OSError, ValueError) as exc:
        return str(getattr(exc, "reason", exc))
