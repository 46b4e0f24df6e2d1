"""An accepted test queues its rescan after the commit; a broker outage loses nothing."""
import pytest
from kombu.exceptions import OperationalError

from analyses.models import Alert, SampleKind, Test, TestState
from analyses.services.assignments import test_assign_bulk
from analyses.services.review import test_accept
from analyses.services.samples import sample_receive, sample_register
from analyses.services.trend_scan import control_baseline_set, trend_scan
from labcore.celery import app
from tests.analyses.lab_setup import AV_HIGH, AV_HIGH_TWIN, enter_duplicates
from tests.analyses.series_setup import accepted_series


def accept_qc_av(users, lot) -> Test:
    sample = sample_register(users["manager"], lot, kind=SampleKind.QC_CHECK, label="QC-REF-11")
    sample_receive(users["manager"], sample, condition="sealed", storage_place="QC shelf")
    test = Test.objects.get(sample=sample, method_code="av")
    test_assign_bulk(users["manager"], [test], assignee=users["analyst"])
    enter_duplicates(users["analyst"], test, AV_HIGH, AV_HIGH_TWIN)
    return test_accept(users["analyst2"], test)


def test_accepting_a_qc_test_queues_the_scan_of_its_series(users, lot, monkeypatch, django_capture_on_commit_callbacks):
    sent = []
    monkeypatch.setattr(app, "send_task", lambda name, args: sent.append((name, args)))
    with django_capture_on_commit_callbacks(execute=True):
        accept_qc_av(users, lot)
    assert sent == [("analyses.tasks.trend_scan_task", ([f"qc:{lot.pk}:av"],))]


def test_a_broker_outage_keeps_the_result_and_the_periodic_scan_catches_up(users, lot, monkeypatch, django_capture_on_commit_callbacks, caplog):
    def broker_down(*args, **kwargs):
        raise OperationalError("Error 111 connecting to 127.0.0.1:6379. Connection refused.")

    monkeypatch.setattr(app, "send_task", broker_down)
    control_baseline_set(users["qa"], series_key=f"qc:{lot.pk}:av", mean=0.35, sd=0.01)
    accepted_series(lot, [0.347, 0.353] * 5)
    with django_capture_on_commit_callbacks(execute=True):
        test = accept_qc_av(users, lot)
    assert Test.objects.get(pk=test.pk).state == TestState.ACCEPTED
    assert "the periodic scan will catch up" in caplog.text
    assert not Alert.objects.exists()
    trend_scan()  # what beat runs every few minutes
    # (2.50 - 0.05) x 0.1 x 56.1 / 20.0 = 0.687 mg KOH/g, ISO 660: far beyond 0.35 + 3 x 0.01 (Westgard 1-3s)
    assert Alert.objects.filter(rule="westgard_1_3s", series_key=f"qc:{lot.pk}:av").exists()
