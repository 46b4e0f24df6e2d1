"""Result series for trend rules, read in one query into a DataFrame.

A QC series is one method on the check samples of one reference lot ("qc:<lot>:<method>");
a production series is one method on the routine samples of one product
("production:<product>:<method>"). Only accepted tests count, in order of receipt.
Each reference lot is one control material (level); the QC series of one method checked
on the same day form one run, and alerts comparing them carry the key "qc-runs:<method>".
"""
from __future__ import annotations

from collections.abc import Iterable
from typing import TYPE_CHECKING

from django.db.models import Q

from analyses.models import SampleKind, SeriesKind, Test, TestState

if TYPE_CHECKING:
    import pandas as pd

QC_RUNS_PREFIX = "qc-runs"
SERIES_COLUMNS = [
    "test_id", "series_id", "kind", "method_code", "lot_id", "product_id", "received_at", "value", "verdict", "run_id", "sequence",
]


def series_key(kind: str, owner_id: int, method_code: str) -> str:
    return f"{kind}:{owner_id}:{method_code}"


def qc_runs_key(method_code: str) -> str:
    """The key of the alerts that compare the control materials of one method in a run."""
    return f"{QC_RUNS_PREFIX}:{method_code}"


def _series_filter(series_keys: Iterable[str]) -> Q:
    """Rows of the named series only, so a scan or chart reads its own series, not the database."""
    wanted = Q(pk__in=[])
    for key in series_keys:
        parts = str(key).split(":", 2)  # a profile component keeps its colons: fac:C18:2
        if len(parts) != 3 or not parts[1].isdigit() or not 0 < int(parts[1]) < 2**63:
            continue
        kind, owner, method_code = parts[0], int(parts[1]), parts[2]
        if kind == SeriesKind.QC_CHECK:
            wanted |= Q(sample__kind=SampleKind.QC_CHECK, sample__lot_id=owner, method_code=method_code)
        elif kind == SeriesKind.PRODUCTION:
            wanted |= Q(sample__kind=SampleKind.ROUTINE, sample__lot__product_id=owner, method_code=method_code)
    return wanted


def trend_series_frame(series_keys: Iterable[str] | None = None, qc_methods: Iterable[str] = ()) -> pd.DataFrame:
    """Accepted QC-check and routine results (of ``series_keys`` and of every QC series of
    ``qc_methods``, or all), one row per test, ordered by series and receipt. A QC check's
    run is its day of receipt: every control material of a method checked that day is in
    the same run, which the Westgard R-4s, 2-2s and 2 of 3 2s rules compare within."""
    import pandas as pd  # here, not at the top: the URLconf imports this module

    rows = Test.objects.filter(
        state=TestState.ACCEPTED,
        value__isnull=False,
        sample__kind__in=(SampleKind.QC_CHECK, SampleKind.ROUTINE),
    )
    if series_keys is not None:
        wanted = _series_filter(series_keys)
        methods = sorted(set(qc_methods))
        if methods:
            wanted |= Q(sample__kind=SampleKind.QC_CHECK, method_code__in=methods)
        rows = rows.filter(wanted)
    rows = rows.values_list(
        "id", "method_code", "value", "verdict", "sample__kind", "sample__lot_id", "sample__lot__product_id", "sample__received_at",
    )
    frame = pd.DataFrame.from_records(
        list(rows), columns=["test_id", "method_code", "value", "verdict", "sample_kind", "lot_id", "product_id", "received_at"]
    )
    if frame.empty:
        return pd.DataFrame(columns=SERIES_COLUMNS)
    is_qc = frame["sample_kind"] == SampleKind.QC_CHECK
    frame["kind"] = is_qc.map({True: SeriesKind.QC_CHECK.value, False: SeriesKind.PRODUCTION.value})
    owner = frame["lot_id"].where(is_qc, frame["product_id"]).astype("int64").astype(str)
    frame["series_id"] = frame["kind"] + ":" + owner + ":" + frame["method_code"]
    received = pd.to_datetime(frame["received_at"], utc=True)
    frame["run_id"] = received.dt.strftime("%Y-%m-%d")
    # Two results received in the same instant would tie; a nudge of test-id nanoseconds
    # (far below a millisecond) keeps the order of receipt, then of test creation.
    frame["sequence"] = received + pd.to_timedelta(frame["test_id"] % 1_000_000, unit="ns")
    frame = frame.sort_values(["series_id", "sequence"], kind="stable").reset_index(drop=True)
    return frame[SERIES_COLUMNS]
