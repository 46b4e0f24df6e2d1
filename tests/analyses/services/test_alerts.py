"""Alerts: one per episode, acknowledged by QA, e-mailed once, webhook retried without loss."""
import pytest
from django.core import mail

from analyses.errors import Conflict, InvalidInput, NotAllowed
from analyses.models import Alert, AlertState, AuditEntry
from analyses.services.alerts import AlertDraft, WebhookFailed, alert_acknowledge, alert_notify, alerts_pending_notification, alerts_raise
from analyses.tasks import alert_notify_task
from tests.webhook_server import WebhookServer


def draft(key: str = "qc:1:av|westgard_1_3s|+|test7") -> AlertDraft:
    return AlertDraft(source="trend", rule="westgard_1_3s", series_key="qc:1:av", episode_key=key, message="1-3s on qc:1:av")


def test_an_episode_raises_one_alert_however_often_it_is_reported(db):
    assert len(alerts_raise([draft(), draft()])) == 1
    assert alerts_raise([draft()]) == []
    assert Alert.objects.count() == 1
    alert = Alert.objects.get()
    assert AuditEntry.objects.filter(object_type="analyses.alert", object_id=str(alert.pk), actor_username="scheduler").exists()


def test_qa_acknowledges_with_a_comment_once(users):
    alert = alerts_raise([draft()])[0]
    with pytest.raises(NotAllowed):
        alert_acknowledge(users["analyst"], alert, comment="seen")
    with pytest.raises(InvalidInput) as caught:
        alert_acknowledge(users["qa"], alert, comment="  ")
    assert "comment" in caught.value.fields
    done = alert_acknowledge(users["qa"], alert, comment="new Wijs solution lot; rerun QC")
    assert (done.state, done.acknowledged_by, done.acknowledgement) == (AlertState.ACKNOWLEDGED, users["qa"], "new Wijs solution lot; rerun QC")
    with pytest.raises(Conflict):
        alert_acknowledge(users["qa"], alert, comment="again")


def test_notification_emails_once(db, settings):
    settings.ALERT_EMAIL_RECIPIENTS = ["qa@example.invalid"]
    settings.ALERT_WEBHOOK_URL = ""
    alert = alerts_raise([draft()])[0]
    alert_notify(alert.pk)
    alert_notify(alert.pk)
    assert len(mail.outbox) == 1
    assert "westgard_1_3s" in mail.outbox[0].subject
    assert alerts_pending_notification() == []


def test_a_failed_webhook_is_recorded_and_raised_and_the_alert_kept(db, settings):
    settings.ALERT_EMAIL_RECIPIENTS = []
    with WebhookServer([500, 200]) as hook:
        settings.ALERT_WEBHOOK_URL = hook.url
        alert = alerts_raise([draft()])[0]
        with pytest.raises(WebhookFailed):
            alert_notify(alert.pk)
        alert.refresh_from_db()
        assert (alert.webhook_attempts, alert.webhook_last_error, alert.webhook_delivered_at) == (1, "HTTP 500", None)
        assert alerts_pending_notification() == [alert.pk]
        alert_notify(alert.pk)
        alert.refresh_from_db()
        assert alert.webhook_attempts == 2 and alert.webhook_delivered_at is not None
        assert hook.received[-1]["rule"] == "westgard_1_3s"
    assert alerts_pending_notification() == []


def test_the_notify_task_retries_a_failing_webhook_until_delivered(db, settings):
    settings.ALERT_EMAIL_RECIPIENTS = []
    with WebhookServer([503, 502, 200]) as hook:
        settings.ALERT_WEBHOOK_URL = hook.url
        alert = alerts_raise([draft()])[0]
        # apply() runs the task here; Celery re-runs it on each autoretry
        alert_notify_task.apply(args=[alert.pk])
        alert.refresh_from_db()
        assert alert.webhook_attempts == 3
        assert alert.webhook_delivered_at is not None
        assert len(hook.received) == 3


def test_an_unreachable_webhook_leaves_the_alert_pending(db, settings):
    settings.ALERT_EMAIL_RECIPIENTS = []
    settings.ALERT_WEBHOOK_URL = "http://127.0.0.1:9/unreachable"  # discard port: nothing listens
    alert = alerts_raise([draft()])[0]
    with pytest.raises(WebhookFailed):
        alert_notify(alert.pk)
    assert Alert.objects.filter(pk=alert.pk, webhook_delivered_at__isnull=True).exists()
    assert alerts_pending_notification() == [alert.pk]
