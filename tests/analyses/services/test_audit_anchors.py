"""audit_anchor_write: the chain's head appended outside the database, only when it moved and
the chain still holds the previous anchor; a refusal is logged and posted, never written."""
from __future__ import annotations

import datetime as dt
import json
import logging
from io import StringIO

import pytest
from django.conf import settings as django_settings
from django.core.management import CommandError, call_command
from django.utils import timezone

from analyses.audit import RecordedHead, audit_chain_extends
from analyses.models import AuditEntry
from analyses.services.audit_anchors import anchor_path, audit_anchor_write, audit_anchors_read
from analyses.services.samples import sample_hold, sample_resume
from analyses.tasks import audit_anchor_task
from tests.analyses.audit_setup import delete_last, move_head, tamper
from tests.webhook_server import WebhookServer

pytestmark = pytest.mark.django_db


def _last() -> AuditEntry:
    return AuditEntry.objects.order_by("sequence").last()


def test_the_head_is_appended_once_per_move(users, received_sample):
    outcome = audit_anchor_write()
    last = _last()
    assert (outcome.written, outcome.sequence, outcome.hash, outcome.problem) == (True, last.sequence, last.entry_hash, "")
    record = json.loads(anchor_path().read_text())
    assert (record["sequence"], record["hash"]) == (last.sequence, last.entry_hash)
    assert abs(dt.datetime.fromisoformat(record["at"]) - timezone.now()) < dt.timedelta(minutes=1)

    assert not audit_anchor_write().written  # the head has not moved: nothing new to record
    sample_hold(users["qa"], received_sample, reason="seal broken")
    assert audit_anchor_write().written
    anchors = audit_anchors_read()
    assert [(a.sequence, a.hash, a.line) for a in anchors] == [
        (last.sequence, last.entry_hash, 1), (_last().sequence, _last().entry_hash, 2)
    ]


def test_an_empty_chain_has_nothing_to_anchor(db):
    outcome = audit_anchor_write()
    assert (outcome.written, outcome.sequence, outcome.problem) == (False, 0, "")
    assert audit_anchors_read() == []


def test_the_directory_comes_from_the_settings(settings, tmp_path, received_sample):
    settings.AUDIT_ANCHOR_DIR = tmp_path / "elsewhere" / "anchors"
    audit_anchor_write()
    assert (tmp_path / "elsewhere" / "anchors" / "audit-head.jsonl").exists()


def test_a_truncated_chain_is_not_anchored_and_the_refusal_is_logged_and_posted(
    settings, caplog, users, received_sample
):
    audit_anchor_write()
    before = anchor_path().read_text()
    delete_last(2)
    survivor = _last()
    move_head(survivor.sequence, survivor.entry_hash)  # the chain looks whole from inside the database
    with WebhookServer([200]) as hook, caplog.at_level(logging.ERROR, logger="analyses.services.audit_anchors"):
        settings.AUDIT_ANCHOR_WEBHOOK_URL = hook.url
        outcome = audit_anchor_write()
    assert not outcome.written and "before the anchor of" in outcome.problem
    assert anchor_path().read_text() == before  # the evidence stays as it was
    assert "audit anchor not written" in caplog.text
    assert hook.received == [{"kind": "audit_chain_broken", "problem": outcome.problem}]


def test_a_rewritten_chain_is_not_anchored(users, received_sample):
    audit_anchor_write()
    tamper("UPDATE {entries} SET reason = 'nothing to see' WHERE sequence = %s", [_last().sequence])
    assert "changed after it was written" in audit_anchor_write().problem
    with pytest.raises(CommandError, match="no anchor written: .*changed after it was written"):
        call_command("audit_anchor", stdout=StringIO())


def test_each_anchor_is_posted_to_the_webhook_when_one_is_set(settings, received_sample):
    with WebhookServer([200]) as hook:
        settings.AUDIT_ANCHOR_WEBHOOK_URL = hook.url
        outcome = audit_anchor_write()
    assert outcome.webhook_error is None
    [posted] = hook.received
    assert (posted["kind"], posted["sequence"], posted["hash"]) == ("audit_anchor", outcome.sequence, outcome.hash)


def test_a_failing_webhook_does_not_stop_the_file(settings, received_sample):
    with WebhookServer([503]) as hook:
        settings.AUDIT_ANCHOR_WEBHOOK_URL = hook.url
        outcome = audit_anchor_write()
    assert outcome.written and outcome.webhook_error == "HTTP 503"
    assert len(audit_anchors_read()) == 1


def test_an_unreadable_anchor_file_is_left_alone(received_sample):
    anchor_path().parent.mkdir(parents=True, exist_ok=True)
    anchor_path().write_text("not an anchor\n")
    outcome = audit_anchor_write()
    assert not outcome.written and "line 1 of" in outcome.problem and "is not an anchor" in outcome.problem
    assert anchor_path().read_text() == "not an anchor\n"


def test_anchors_never_go_back_in_time(users, received_sample):
    first = timezone.now()
    audit_anchor_write(now=first)
    sample_hold(users["qa"], received_sample, reason="seal broken")
    audit_anchor_write(now=first - dt.timedelta(hours=1))  # the clock was set back
    assert [a.at for a in audit_anchors_read()] == [first, first]


def test_only_the_entries_after_the_anchor_are_walked(users, received_sample):
    audit_anchor_write()
    anchored = audit_anchors_read()[-1]
    sample_hold(users["qa"], received_sample, reason="seal broken")
    sample_resume(users["qa"], received_sample, reason="checked")
    report = audit_chain_extends(RecordedHead(anchored.sequence, anchored.hash, "the anchor"))
    assert report.ok and report.checked == 2 and report.head_sequence == _last().sequence


def test_the_task_and_the_command_write_an_anchor(users, received_sample):
    assert audit_anchor_task.apply().get()["written"] is True
    out = StringIO()
    call_command("audit_anchor", stdout=out)
    assert "already anchored" in out.getvalue()
    sample_hold(users["qa"], received_sample, reason="seal broken")
    call_command("audit_anchor", stdout=out)
    assert f"anchored {_last().sequence}:{_last().entry_hash}" in out.getvalue()


def test_beat_writes_an_anchor_every_few_minutes():
    entry = django_settings.CELERY_BEAT_SCHEDULE["audit-anchor"]
    assert entry["task"] == "analyses.tasks.audit_anchor_task" and entry["schedule"] <= 600
