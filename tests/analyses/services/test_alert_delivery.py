"""Alert delivery: e-mail once, the webhook until it accepts, one retry mechanism, nothing lost."""
import datetime as dt

import pytest
from django.core import mail
from django.utils import timezone

from analyses.models import Alert
from analyses.services.alert_delivery import alert_notify, alerts_pending_notification, retry_delay
from analyses.services.alerts import AlertDraft, alerts_raise
from analyses.tasks import alert_notify_task, alerts_notify_pending_task
from tests.webhook_server import WebhookServer


@pytest.fixture
def alert(db):
    draft = AlertDraft(source="trend", rule="westgard_1_3s", series_key="qc:1:av", episode_key="qc:1:av|1_3s|+|test7", message="1-3s on qc:1:av")
    return alerts_raise([draft])[0]


def make_due(alert: Alert) -> None:
    """Pretend the back-off has passed (the sweep would pick it up now)."""
    Alert.objects.filter(pk=alert.pk).update(notify_after=timezone.now() - dt.timedelta(seconds=1))


def test_email_is_sent_once(alert, settings):
    settings.ALERT_EMAIL_RECIPIENTS, settings.ALERT_WEBHOOK_URL = ["qa@example.invalid"], ""
    assert alert_notify(alert.pk).emailed
    assert not alert_notify(alert.pk).emailed
    assert len(mail.outbox) == 1 and "westgard_1_3s" in mail.outbox[0].subject
    assert alerts_pending_notification() == []


def test_a_failed_webhook_is_recorded_kept_and_retried_after_its_back_off(alert, settings):
    settings.ALERT_EMAIL_RECIPIENTS = []
    with WebhookServer([500, 200]) as hook:
        settings.ALERT_WEBHOOK_URL = hook.url
        first = alert_notify(alert.pk)
        assert (first.delivered, first.owed, first.errors) == (False, True, ("webhook: HTTP 500",))
        alert.refresh_from_db()
        assert (alert.webhook_attempts, alert.webhook_last_error, alert.webhook_delivered_at) == (1, "webhook: HTTP 500", None)
        assert alert.notify_after > timezone.now()  # backing off: the sweep leaves it for now
        assert alerts_pending_notification() == []
        assert alerts_pending_notification(now=alert.notify_after) == [alert.pk]
        make_due(alert)
        assert alert_notify(alert.pk).delivered
        assert hook.received[-1]["rule"] == "westgard_1_3s"
    alert.refresh_from_db()
    assert alert.webhook_attempts == 2 and alert.webhook_delivered_at is not None and alert.notify_after is None
    assert alerts_pending_notification(now=timezone.now() + dt.timedelta(days=1)) == []


def test_a_redirect_is_a_failure_not_a_delivery(alert, settings):
    # urllib would turn a redirected POST into a GET without the body: the alert would be lost
    settings.ALERT_EMAIL_RECIPIENTS = []
    with WebhookServer([301]) as hook:
        settings.ALERT_WEBHOOK_URL = hook.url
        outcome = alert_notify(alert.pk)
        assert outcome.errors == ("webhook: HTTP 301",) and outcome.owed
        assert not any("followed_redirect_to" in body for body in hook.received)


def test_a_mail_server_that_is_down_does_not_block_the_webhook(alert, settings):
    settings.EMAIL_BACKEND = "django.core.mail.backends.smtp.EmailBackend"
    settings.EMAIL_HOST, settings.EMAIL_PORT, settings.EMAIL_TIMEOUT = "127.0.0.1", 9, 2  # discard port: refused
    settings.ALERT_EMAIL_RECIPIENTS = ["qa@example.invalid"]
    with WebhookServer([200]) as hook:
        settings.ALERT_WEBHOOK_URL = hook.url
        outcome = alert_notify(alert.pk)
    assert outcome.delivered and not outcome.emailed and outcome.owed
    assert outcome.errors[0].startswith("e-mail:")
    alert.refresh_from_db()
    assert alert.emailed_at is None and alert.webhook_delivered_at is not None


def test_an_alert_being_sent_is_not_sent_again_by_a_second_run(alert, settings):
    settings.ALERT_EMAIL_RECIPIENTS, settings.ALERT_WEBHOOK_URL = ["qa@example.invalid"], ""
    Alert.objects.filter(pk=alert.pk).update(notify_after=timezone.now() + dt.timedelta(minutes=5))  # claimed
    outcome = alert_notify(alert.pk)
    assert outcome.owed and not outcome.emailed and mail.outbox == []


def test_an_unreachable_webhook_leaves_the_alert_owed(alert, settings):
    settings.ALERT_EMAIL_RECIPIENTS = []
    settings.ALERT_WEBHOOK_URL = "http://127.0.0.1:9/unreachable"  # discard port: nothing listens
    assert alert_notify(alert.pk).owed
    assert Alert.objects.filter(pk=alert.pk, webhook_delivered_at__isnull=True).exists()


def test_the_sweep_queues_only_alerts_that_are_owed_and_due(alert, settings, monkeypatch):
    settings.ALERT_EMAIL_RECIPIENTS, settings.ALERT_WEBHOOK_URL = ["qa@example.invalid"], ""
    queued = []
    monkeypatch.setattr(alert_notify_task, "delay", queued.append)
    assert alerts_notify_pending_task.apply().get() == 1 and queued == [alert.pk]
    alert_notify(alert.pk)
    assert alerts_notify_pending_task.apply().get() == 0


def test_the_task_runs_one_attempt_and_reports_it(alert, settings):
    settings.ALERT_EMAIL_RECIPIENTS = []
    with WebhookServer([503]) as hook:
        settings.ALERT_WEBHOOK_URL = hook.url
        result = alert_notify_task.apply(args=[alert.pk]).get()
    assert result == {"alert": alert.pk, "owed": True, "errors": ["webhook: HTTP 503"]}
    assert len(hook.received) == 1  # no task-level retry: the sweep is the one retry mechanism


def test_back_off_doubles_from_a_minute_to_an_hour():
    assert [retry_delay(n) for n in (1, 2, 3)] == [dt.timedelta(minutes=m) for m in (1, 2, 4)]
    assert retry_delay(20) == dt.timedelta(hours=1)
