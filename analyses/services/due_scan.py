"""The daily look-ahead over reagents and instruments: calibrations, routine checks and
standardisations falling due within ``TRACEABILITY_DUE_DAYS`` days, and titrant lots about to
expire, each raised as an alert through the ordinary alert delivery (``alerts_raise``: stored
once per episode, then e-mailed and posted to the webhook).

One alert per item and due date: the episode key is "<what>:<item>:<due date>", so the next
scan finds it and raises nothing, and a new calibration (a new due date) makes a new episode.
A check or standardisation renewed more often than the look-ahead (a balance checked daily,
thiosulfate standardised daily) would be due in every scan; it is raised only once missed.
"""
from __future__ import annotations

import datetime as dt
from dataclasses import dataclass

from django.conf import settings
from django.utils import timezone

from analyses.models import AlertSeverity, AlertSource
from analyses.selectors.traceability import instruments_with_status, lots_with_current
from analyses.services.alerts import AlertDraft, alerts_raise


@dataclass(frozen=True)
class DueScan:
    looked_ahead_days: int
    items_due: int
    alerts_raised: int


def _draft(rule: str, series: str, what: str, due: dt.date, today: dt.date, item: str) -> AlertDraft:
    overdue = due < today
    when = f"was due {due.isoformat()}" if overdue else f"falls due {due.isoformat()}"
    return AlertDraft(
        source=AlertSource.TRACEABILITY, rule=rule, series_key=series, episode_key=f"{rule}:{series}:{due.isoformat()}",
        message=f"{item}: {what} {when}", severity=AlertSeverity.ALARM if overdue else AlertSeverity.WARNING,
        points=[{"item": item, "due_on": due.isoformat()}],
    )


def traceability_due_drafts(now: dt.datetime, days: int) -> list[AlertDraft]:
    """The alerts the scan would raise at ``now`` looking ``days`` ahead (three queries)."""
    today = timezone.localtime(now).date()
    horizon = today + dt.timedelta(days=days)
    drafts: list[AlertDraft] = []
    for instrument in instruments_with_status().filter(latest_calibration_id__isnull=False):
        series, name = f"instrument:{instrument.asset_id}", f"instrument {instrument.asset_id} ({instrument.kind})"
        due = instrument.latest_calibration_due_on
        if due <= horizon:
            drafts.append(_draft("calibration_due", series, "calibration", due, today, name))
        if instrument.check_every_days and instrument.latest_check_at is not None:
            check_due = timezone.localtime(instrument.latest_check_at).date() + dt.timedelta(days=instrument.check_every_days)
            if check_due <= (horizon if instrument.check_every_days > days else today - dt.timedelta(days=1)):
                drafts.append(_draft("check_due", series, "routine check", check_due, today, name))
    lots = lots_with_current().select_related("kind").filter(expires_on__gte=today - dt.timedelta(days=days))
    for lot in lots:
        series, name = f"reagent_lot:{lot.code}", f"titrant lot {lot.code} ({lot.kind.name})"
        if lot.expires_on <= horizon:
            drafts.append(_draft("lot_expiring", series, "expiry", lot.expires_on, today, name))
        if lot.current_valid_until is not None and lot.expires_on >= today:
            valid_until = timezone.localtime(lot.current_valid_until).date()
            if valid_until <= (horizon if lot.kind.validity_days > days else today - dt.timedelta(days=1)):
                drafts.append(_draft("standardisation_due", series, "standardisation", valid_until, today, name))
    return drafts


def traceability_due_scan(now: dt.datetime | None = None, days: int | None = None) -> DueScan:
    """Raise what falls due (idempotent: each episode once). Run daily by the beat."""
    now = now or timezone.now()
    days = settings.TRACEABILITY_DUE_DAYS if days is None else days
    drafts = traceability_due_drafts(now, days)
    return DueScan(looked_ahead_days=days, items_due=len(drafts), alerts_raised=len(alerts_raise(drafts)))
