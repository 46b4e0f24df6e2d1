"""Turnaround per method: from the sample's receipt to the test's acceptance."""
from __future__ import annotations

import datetime as dt
from typing import Any

from analyses.models import Test, TestState


def turnaround_by_method(
    *, since: dt.datetime | None = None, until: dt.datetime | None = None
) -> list[dict[str, Any]]:
    """One row per method: ``{"method", "count", "mean_hours", "median_hours"}`` over the
    tests accepted in [since, until), in hours from sample receipt to acceptance."""
    accepted = Test.objects.filter(state=TestState.ACCEPTED, sample__received_at__isnull=False)
    if since is not None:
        accepted = accepted.filter(reviewed_at__gte=since)
    if until is not None:
        accepted = accepted.filter(reviewed_at__lt=until)
    rows = list(accepted.values_list("method_code", "sample__received_at", "reviewed_at"))
    if not rows:
        return []
    import pandas as pd  # here, not at the top: the URLconf imports this module

    frame = pd.DataFrame(rows, columns=["method", "received_at", "accepted_at"])
    frame["hours"] = (
        pd.to_datetime(frame["accepted_at"], utc=True) - pd.to_datetime(frame["received_at"], utc=True)
    ).dt.total_seconds() / 3600.0
    summary = frame.groupby("method")["hours"].agg(["count", "mean", "median"]).sort_index()
    return [
        {"method": method, "count": int(row["count"]), "mean_hours": float(row["mean"]), "median_hours": float(row["median"])}
        for method, row in summary.iterrows()
    ]
