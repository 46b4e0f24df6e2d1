"""Alerts: one per episode, acknowledged by QA."""
import pytest

from analyses.errors import Conflict, InvalidInput, NotAllowed
from analyses.models import Alert, AlertState, AuditEntry
from analyses.audit import audit_chain_verify
from analyses.services.alerts import AlertDraft, alert_acknowledge, alerts_raise
from analyses.services.system import scheduler_actor
from tests.analyses.concurrency import THREADS, race


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


def test_many_drafts_at_once_are_looked_up_in_batches(db):
    # more keys than SQLite accepts as parameters of one query
    drafts = [draft(f"qc:1:av|nelson_1|+|test{i}") for i in range(1200)]
    assert len(alerts_raise(drafts)) == 1200
    assert alerts_raise(drafts) == []


@pytest.mark.django_db(transaction=True)
def test_scans_raising_overlapping_episodes_at_once_raise_each_alert_once_on_postgresql(postgres):
    """Scans running at once may report the same episodes in different orders (a rescan of
    one series beside the periodic scan): each alert is raised once, and no scan fails,
    neither on the unique episode key nor on a deadlock between it and the audit chain."""
    keys = [f"race-{n}" for n in range(THREADS)]
    scheduler_actor()  # made once beforehand, as after the first scan
    outcomes = race(lambda i: alerts_raise([draft(key) for key in keys[i:] + keys[:i]]))
    assert [o for o in outcomes if isinstance(o, Exception)] == []
    assert sorted(alert.episode_key for raised in outcomes for alert in raised) == keys  # each raised by one scan
    assert Alert.objects.filter(episode_key__in=keys).count() == THREADS
    assert AuditEntry.objects.filter(object_type="analyses.alert", action="create").count() == THREADS
    assert audit_chain_verify().ok
