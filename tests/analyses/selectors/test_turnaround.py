"""Turnaround per method, receipt to acceptance (mean and median by pandas)."""
from __future__ import annotations

import datetime as dt

import pytest

from analyses.models import Sample, Test
from analyses.selectors.turnaround import turnaround_by_method
from tests.factories import SampleFactory, SpecificationLineFactory, TestFactory

pytestmark = pytest.mark.django_db
T0 = dt.datetime(2030, 1, 1, 8, 0, tzinfo=dt.UTC)


def _accepted(line, hours: float) -> Test:
    sample = SampleFactory(received_at=T0, state="testing_complete")
    return TestFactory(sample=sample, specification_line=line, state="accepted", reviewed_at=T0 + dt.timedelta(hours=hours))


def test_mean_median_and_count_per_method():
    av = SpecificationLineFactory(method_code="av")
    pv = SpecificationLineFactory(method_code="pv", unit="meq O2/kg", maximum="10.0")
    for hours in (24, 48):
        _accepted(av, hours)
    for hours in (10, 20, 60):
        _accepted(pv, hours)
    TestFactory(specification_line=pv, sample=SampleFactory(received_at=T0))  # pending: not counted
    # arithmetic: AV mean (24 + 48) / 2 = 36, median 36; PV mean 90 / 3 = 30, median 20
    assert turnaround_by_method() == [
        {"method": "av", "count": 2, "mean_hours": 36.0, "median_hours": 36.0},
        {"method": "pv", "count": 3, "mean_hours": 30.0, "median_hours": 20.0},
    ]
    # only acceptances from 30 h on: AV 48; PV 60
    since = T0 + dt.timedelta(hours=30)
    assert [(r["method"], r["count"], r["mean_hours"]) for r in turnaround_by_method(since=since)] == [
        ("av", 1, 48.0),
        ("pv", 1, 60.0),
    ]


def test_no_accepted_tests_no_rows():
    assert turnaround_by_method() == []
    assert Sample.objects.count() == 0
