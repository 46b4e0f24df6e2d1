"""Accepted results in bulk, for trend and stability tests.

Rows are written with factories (the review path itself is tested elsewhere); values and
receipt times are chosen by each test.
"""
from __future__ import annotations

import datetime as dt
from collections.abc import Sequence

from django.utils import timezone

from analyses.models import Lot, SampleKind, TestState
from tests.factories import SampleFactory, SpecificationLineFactory, TestFactory

START = dt.datetime(2026, 1, 1, 8, 0, tzinfo=dt.timezone.utc)


def accepted_series(lot: Lot, values: Sequence[float], *, kind: str = SampleKind.QC_CHECK, method_code: str = "av",
                    start: dt.datetime = START, first_index: int = 0, verdict: str = "pass") -> list:
    """One accepted test per value on ``lot``, received an hour apart from ``start``."""
    line = SpecificationLineFactory(method_code=method_code, maximum="1000")
    tests = []
    for offset, value in enumerate(values):
        index = first_index + offset
        received = start + dt.timedelta(hours=index)
        sample = SampleFactory(lot=lot, kind=kind, label=f"{lot.code}-{kind}-{method_code}-{index}", received_at=received, state="testing_complete")
        tests.append(TestFactory(
            sample=sample, specification_line=line, method_code=method_code, state=TestState.ACCEPTED,
            value=float(value), reported=f"{value:.2f}", unit="mg KOH/g", verdict=verdict, reviewed_at=timezone.now(),
        ))
    return tests
