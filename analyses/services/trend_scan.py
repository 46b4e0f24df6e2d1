"""The periodic trend scan: every series against its rules, one alert per episode.

QC check series get the Westgard multirules, each control material on its own and the
materials of one method against each other within a run; production series the Nelson rules, an
EWMA chart and the out-of-trend rule. Each series' mean and SD come from a baseline
entered by QA or, failing that, are established once from its first
``MINIMUM_BASELINE_POINTS`` results and stored.
"""
from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass, field
from typing import TYPE_CHECKING

from django.conf import settings
from django.db import transaction
from django.utils import timezone

from analyses.audit import audit_append, created
from analyses.errors import InvalidInput
from analyses.models import (
    OOS_VERDICTS,
    Alert,
    AlertSeverity,
    AlertSource,
    AuditAction,
    BaselineSource,
    ControlBaseline,
    Lot,
    Product,
    SeriesKind,
)
from analyses.selectors.trend_series import qc_runs_key, trend_series_frame
from analyses.services.access import Actor, require_permission
from analyses.selectors.series_names import point_names, series_names
from analyses.services.alert_texts import across_materials_message, trend_alert_message
from analyses.services.alerts import AlertDraft, alerts_raise
from analyses.services.system import scheduler_actor
from analyses.services.uniqueness import insert_or_fetch
from analyses.trends.rules import RULES

if TYPE_CHECKING:
    import pandas as pd

# The statistics (pandas, numpy, scipy, statsmodels behind analyses.trends) are imported
# inside the functions, so that loading the URLconf and every management command stays fast.

FAMILIES_BY_KIND: dict[str, tuple[str, ...]] = {
    SeriesKind.QC_CHECK: ("westgard",),
    SeriesKind.PRODUCTION: ("nelson", "ewma", "out_of_trend"),
}
BASELINE_FIELDS = ("series_key", "kind", "method_code", "mean", "sd", "n_points", "source")


@dataclass
class ScanSummary:
    series_scanned: int = 0
    results_scanned: int = 0
    episodes: int = 0
    alerts_raised: int = 0
    series_without_baseline: list[str] = field(default_factory=list)


def control_baseline_set(actor: Actor, *, series_key: str, mean: float, sd: float, reason: str = "") -> ControlBaseline:
    """QA enters (or replaces) the mean and SD of a series."""
    require_permission(actor, "set_control_baseline", "enter control baselines")
    kind, method_code = _parse_key(series_key)
    if not (isinstance(sd, (int, float)) and sd > 0):
        raise InvalidInput.for_field("sd", "must be a number above 0")
    _check_series_exists(series_key, kind, method_code)
    values = {
        "mean": float(mean), "sd": float(sd), "n_points": 0,
        "source": BaselineSource.ENTERED, "set_by": actor, "set_at": timezone.now(),
    }
    with transaction.atomic():
        baseline = ControlBaseline.objects.select_for_update().filter(series_key=series_key).first()
        made = False
        if baseline is None:
            # no row to lock yet: a concurrent first entry meets the unique index, and the
            # loser replaces the winner's values as a later entry would (serialised on its row)
            baseline, made = insert_or_fetch(
                ControlBaseline, {"series_key": series_key},
                lambda: ControlBaseline.objects.create(series_key=series_key, kind=kind, method_code=method_code, **values),
                lock=True,
            )
        before = None
        if not made:
            before = {"mean": baseline.mean, "sd": baseline.sd, "source": baseline.source}
            for name, value in values.items():
                setattr(baseline, name, value)
            baseline.save()
        changes = (
            created(baseline, BASELINE_FIELDS)
            if before is None
            else {k: [before[k], getattr(baseline, k)] for k in before if before[k] != getattr(baseline, k)}
        )
        audit_append(actor, AuditAction.CREATE if before is None else AuditAction.CHANGE, baseline, changes, reason=reason)
    return baseline


def trend_scan(series_keys: Iterable[str] | None = None) -> ScanSummary:
    """Scan the given series (default: all) and raise one alert per new episode. A QC
    series brings in every QC series of its method, whose runs it is compared within."""
    from analyses.trends.scan import series_scan

    keys = None if series_keys is None else [str(key) for key in series_keys]
    frame = trend_series_frame(keys, qc_methods=_qc_methods(keys or []))
    summary = ScanSummary(results_scanned=len(frame), series_scanned=int(frame["series_id"].nunique()))
    if frame.empty:
        return summary
    limits = _baselines(frame, summary)
    drafts: list[AlertDraft] = []
    for kind, families in FAMILIES_BY_KIND.items():
        part = frame[(frame["kind"] == kind) & frame["series_id"].isin(limits.index)]
        if part.empty:
            continue
        # QC checks carry their run (day of receipt) for R-4s; production series have none.
        columns = ["series_id", "sequence", "value", "run_id"] if kind == SeriesKind.QC_CHECK else ["series_id", "sequence", "value"]
        episodes = series_scan(
            part[columns], limits.reset_index(), families=families,
            ewma_smoothing=settings.TREND_EWMA_SMOOTHING, ewma_width=settings.TREND_EWMA_WIDTH,
        )
        summary.episodes += len(episodes)
        drafts += _drafts(part, episodes)
        if kind == SeriesKind.QC_CHECK:
            drafts += _across_material_drafts(part, limits, summary)
    summary.alerts_raised = len(alerts_raise(_not_yet_alerted(drafts)))
    return summary


def _not_yet_alerted(drafts: list[AlertDraft]) -> list[AlertDraft]:
    """Drop a draft that shares a point with an alert of the same series, rule and side: the
    same episode seen again (grown, or shifted by a late result or a new baseline)."""
    if not drafts:
        return []
    seen: dict[tuple[str, str, str], set[int]] = {}
    existing = Alert.objects.filter(source=AlertSource.TREND, series_key__in={d.series_key for d in drafts})
    for key, rule, points in existing.values_list("episode_key", "rule", "points"):
        side = key.split("|")[2] if key.count("|") >= 3 else ""
        seen.setdefault((key.split("|")[0], rule, side), set()).update(p["test_id"] for p in points)
    fresh = []
    for draft in drafts:
        alerted = seen.setdefault((draft.series_key, draft.rule, draft.episode_key.split("|")[2]), set())
        tests = {p["test_id"] for p in draft.points}
        if not tests & alerted:
            fresh.append(draft)
            alerted |= tests
    return fresh


def _qc_methods(series_keys: list[str]) -> list[str]:
    parts = [key.split(":", 2) for key in series_keys]
    return sorted({p[2] for p in parts if len(p) == 3 and p[0] == SeriesKind.QC_CHECK and p[2]})


def _check_series_exists(series_key: str, kind: str, method_code: str) -> None:
    """InvalidInput on ``series_key`` unless its method is registered and its owner exists: the
    control material's lot of a QC series, the product of a production series. A baseline may
    come before the series' first result (from a reference material's certificate)."""
    from plugins.registry import get_registry

    owner_id = int(str(series_key).split(":")[1])
    if method_code not in get_registry():
        raise InvalidInput.for_field(
            "series_key", f"names method {method_code!r}, which is not registered (known: {', '.join(get_registry().codes())})"
        )
    if kind == SeriesKind.QC_CHECK:
        if not (owner_id < 2**63 and Lot.objects.filter(pk=owner_id).exists()):
            raise InvalidInput.for_field("series_key", f"names lot {owner_id}, which does not exist; a QC series is qc:<lot id>:<method>")
    elif not (owner_id < 2**63 and Product.objects.filter(pk=owner_id).exists()):
        raise InvalidInput.for_field(
            "series_key", f"names product {owner_id}, which does not exist; a production series is production:<product id>:<method>"
        )


def _parse_key(series_key: str) -> tuple[str, str]:
    parts = str(series_key).split(":", 2)
    if len(parts) != 3 or parts[0] not in SeriesKind.values or not parts[1].isdigit() or not parts[2]:
        raise InvalidInput.for_field("series_key", "must look like qc:<lot id>:<method> or production:<product id>:<method>")
    return parts[0], parts[2]


def _baselines(frame: pd.DataFrame, summary: ScanSummary) -> pd.DataFrame:
    """Mean and SD per series; establishes and stores missing ones that have enough results."""
    import pandas as pd

    from analyses.trends.westgard import MINIMUM_BASELINE_POINTS

    keys = frame["series_id"].unique().tolist()
    stored = {b.series_key: b for b in ControlBaseline.objects.filter(series_key__in=keys)}
    counts = frame.groupby("series_id")["value"].size()
    ready = [k for k in keys if k not in stored and counts[k] >= MINIMUM_BASELINE_POINTS]
    summary.series_without_baseline = sorted(k for k in keys if k not in stored and k not in ready)
    if ready:
        head = frame[frame["series_id"].isin(ready)].groupby("series_id").head(MINIMUM_BASELINE_POINTS)
        stats = head.groupby("series_id")["value"].agg(["mean", "std"])
        usable = stats[stats["std"] > 0]
        # a series whose first results are all equal has no spread to chart against
        summary.series_without_baseline = sorted({*summary.series_without_baseline, *stats.index[~(stats["std"] > 0)]})
        actor = scheduler_actor()
        for key, row in usable.iterrows():
            # one transaction per baseline: a scan running at the same time (a rescan of one
            # series beside the periodic one) may establish it first, and then its row is used
            stored[key], _ = insert_or_fetch(
                ControlBaseline, {"series_key": key}, lambda key=key, row=row: _baseline_establish(actor, key, row)
            )
    return pd.DataFrame(
        [{"series_id": k, "mean": b.mean, "sd": b.sd} for k, b in stored.items() if k in counts.index],
        columns=["series_id", "mean", "sd"],
    ).set_index("series_id")


def _baseline_establish(actor, key: str, row: pd.Series) -> ControlBaseline:
    from analyses.trends.westgard import MINIMUM_BASELINE_POINTS  # numpy: only when scanning

    kind, method_code = _parse_key(key)
    baseline = ControlBaseline.objects.create(
        series_key=key, kind=kind, method_code=method_code, mean=float(row["mean"]), sd=float(row["std"]),
        n_points=MINIMUM_BASELINE_POINTS, source=BaselineSource.ESTABLISHED, set_at=timezone.now(),
    )
    audit_append(actor, AuditAction.CREATE, baseline, created(baseline, BASELINE_FIELDS),
                 reason=f"established from the first {MINIMUM_BASELINE_POINTS} results")
    return baseline


def _drafts(part: pd.DataFrame, episodes: pd.DataFrame) -> list[AlertDraft]:
    if episodes.empty:
        return []
    by_series = {key: group.reset_index(drop=True) for key, group in part.groupby("series_id", sort=False)}
    involved_of = []
    for episode in episodes.itertuples(index=False):
        involved = by_series[episode.series_id].iloc[list(episode.points)]
        if episode.rule == "out_of_trend":
            # an out-of-specification result is already an OOS investigation, not also out-of-trend
            involved = involved[~involved["verdict"].isin(OOS_VERDICTS)]
        if not involved.empty:
            involved_of.append((episode, involved))
    # the names in the texts: two queries for every series and point of this scan
    names = series_names({episode.series_id for episode, _ in involved_of})
    points = point_names(int(t) for _, involved in involved_of for t in involved["test_id"])
    drafts = []
    for episode, involved in involved_of:
        rule = RULES[episode.rule]
        first_test = int(involved["test_id"].iloc[0])
        kind, method_code = _parse_key(episode.series_id)
        first_row = involved.iloc[0]
        drafts.append(
            AlertDraft(
                source=AlertSource.TREND,
                rule=episode.rule,
                severity=AlertSeverity.WARNING if rule.warning_only else AlertSeverity.ALARM,
                series_key=episode.series_id,
                episode_key=f"{episode.series_id}|{episode.rule}|{episode.side}|test{first_test}",
                message=trend_alert_message(
                    episode.rule, episode.side, names[episode.series_id],
                    [points[int(t)] for t in involved["test_id"]], [r.isoformat() for r in involved["received_at"]],
                ),
                points=[_point(row) for row in involved.itertuples(index=False)],
                method_code=method_code,
                product_id=int(first_row["product_id"]),
                lot_id=int(first_row["lot_id"]) if kind == SeriesKind.QC_CHECK else None,
            )
        )
    return drafts


def _across_material_drafts(part: pd.DataFrame, limits: pd.DataFrame, summary: ScanSummary) -> list[AlertDraft]:
    """Alerts of the rules comparing a method's control materials within a run; an
    alert names the method's runs ("qc-runs:<method>"), not one lot."""
    from analyses.trends.across_materials import across_materials_scan

    ordered = part.sort_values(["method_code", "sequence"], kind="stable").reset_index(drop=True)
    runs = ordered[["series_id", "sequence", "value", "run_id"]].assign(run_group=ordered["method_code"])
    episodes = across_materials_scan(runs, limits.reset_index())
    summary.episodes += len(episodes)
    if episodes.empty:
        return []
    by_method = {code: group.reset_index(drop=True) for code, group in ordered.groupby("method_code", sort=False)}
    involved_of = [(episode, by_method[episode.series_id].iloc[list(episode.points)]) for episode in episodes.itertuples(index=False)]
    names = series_names({key for _, involved in involved_of for key in involved["series_id"]})
    points = point_names(int(t) for _, involved in involved_of for t in involved["test_id"])
    drafts = []
    for episode, involved in involved_of:
        rule, key = RULES[episode.rule], qc_runs_key(episode.series_id)
        first_test = int(involved["test_id"].iloc[0])
        materials = [names[series] for series in sorted(involved["series_id"].unique())]
        drafts.append(
            AlertDraft(
                source=AlertSource.TREND,
                rule=episode.rule,
                severity=AlertSeverity.WARNING if rule.warning_only else AlertSeverity.ALARM,
                series_key=key,
                episode_key=f"{key}|{episode.rule}|{episode.side}|test{first_test}",
                message=across_materials_message(
                    episode.rule, episode.side, str(episode.series_id), materials,
                    [points[int(t)] for t in involved["test_id"]], [r.isoformat() for r in involved["received_at"]],
                ),
                points=[{**_point(row), "series_key": row.series_id} for row in involved.itertuples(index=False)],
                method_code=str(episode.series_id),
            )
        )
    return drafts


def _point(row) -> dict:
    return {"test_id": int(row.test_id), "value": float(row.value), "received_at": row.received_at.isoformat()}
