"""Stability studies: create the protocol, take the pulls when due, evaluate the results.

Times are in months for the regressions; a pull at N days counts as N / 30.4375 months
(the mean Gregorian month, 365.25 / 12 days).
"""
from __future__ import annotations

import datetime as dt
import logging
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

from dateutil.relativedelta import relativedelta
from django.db import transaction
from django.db.models import Count, Q
from django.utils import timezone

from analyses.audit import audit_append, created
from analyses.errors import DomainError, InvalidInput
from analyses.models import (
    AlertSeverity,
    AlertSource,
    AuditAction,
    Light,
    Lot,
    OffsetUnit,
    Product,
    PullPoint,
    SampleKind,
    StabilityStudy,
    StorageCategory,
    StorageCondition,
    StudyAttribute,
    StudyState,
    TestState,
)
from analyses.services.access import Actor, fetch, require_permission, required_text
from analyses.services.uniqueness import UniqueKey
from analyses.services.alert_texts import stability_alert_message
from analyses.services.alerts import AlertDraft, alerts_raise
from analyses.services.samples import sample_receive, sample_register
from analyses.services.stability_evaluation import study_evaluation
from analyses.services.system import scheduler_actor
from plugins.registry import get_registry

logger = logging.getLogger(__name__)

DAYS_PER_MONTH = 365.25 / 12
MAX_OFFSET = {OffsetUnit.DAYS: 7300, OffsetUnit.MONTHS: 240}  # 20 years: longer than any shelf-life claim
PULL_GRACE_DAYS = 7  # a pull not tested a week after its due date is overdue (common practice, no source)
STUDY_FIELDS = (
    "code", "title", "product_id", "started_on", "storage_temperature_c", "storage_category", "claimed_shelf_life_months",
    "state",
)
ATTRIBUTE_FIELDS = ("method_code", "minimum", "maximum", "significant_change")


@dataclass
class ScheduleSummary:
    pulls_taken: int = 0
    pulls_failed: int = 0
    pulls_overdue: int = 0
    alerts_raised: int = 0


@dataclass
class EvaluationOutcome:
    evaluation: dict[str, Any]
    alerts_raised: int


def _number(raw: Any, field: str, *, low: float | None = None, high: float | None = None) -> float:
    if isinstance(raw, bool) or not isinstance(raw, (int, float, str)):
        raise InvalidInput.for_field(field, "must be a number")
    try:
        value = float(raw)
    except ValueError:
        raise InvalidInput.for_field(field, "must be a number") from None
    if value != value or value in (float("inf"), float("-inf")):
        raise InvalidInput.for_field(field, "must be a finite number")
    if low is not None and value < low:
        raise InvalidInput.for_field(field, f"must be at least {low:g}")
    if high is not None and value > high:
        raise InvalidInput.for_field(field, f"must be at most {high:g}")
    return value


def _items(raw: Any, field: str) -> list[Mapping[str, Any]]:
    if not isinstance(raw, (list, tuple)) or not raw:
        raise InvalidInput.for_field(field, "must be a non-empty list")
    for index, item in enumerate(raw):
        if not isinstance(item, Mapping):
            raise InvalidInput.for_field(f"{field}.{index}", "must be an object")
    return list(raw)


def _clean_conditions(raw: Any) -> list[tuple[float, str]]:
    conditions = []
    for index, item in enumerate(_items(raw, "conditions")):
        temperature = _number(item.get("temperature_c"), f"conditions.{index}.temperature_c", low=-40, high=120)
        light = item.get("light", Light.DARK)
        if light not in Light.values:
            raise InvalidInput.for_field(f"conditions.{index}.light", f"must be one of {', '.join(Light.values)}")
        if (temperature, light) in conditions:
            raise InvalidInput.for_field(f"conditions.{index}", "repeats another condition")
        conditions.append((temperature, light))
    return conditions


def _clean_pulls(raw: Any) -> list[tuple[int, str]]:
    pulls = []
    for index, item in enumerate(_items(raw, "pull_points")):
        offset = item.get("offset")
        if isinstance(offset, bool) or not isinstance(offset, int) or offset < 0:
            raise InvalidInput.for_field(f"pull_points.{index}.offset", "must be a whole number of days or months, 0 or more")
        unit = item.get("unit", OffsetUnit.MONTHS)
        if unit not in OffsetUnit.values:
            raise InvalidInput.for_field(f"pull_points.{index}.unit", f"must be one of {', '.join(OffsetUnit.values)}")
        if offset > MAX_OFFSET[unit]:
            raise InvalidInput.for_field(f"pull_points.{index}.offset", f"must be at most {MAX_OFFSET[unit]} {unit}")
        if (offset, unit) in pulls:
            raise InvalidInput.for_field(f"pull_points.{index}", "repeats another pull point")
        pulls.append((offset, unit))
    return pulls


def _clean_category(raw: Any, storage_c: float) -> str:
    """The declared ICH Q1E storage category, or the one of the storage temperature; a
    declared one may be stricter than the temperature's, never more permissive."""
    from analyses.stability.extrapolation import category_fits, storage_category_for  # numpy: not at start-up

    if raw is None:
        return storage_category_for(storage_c)
    if raw not in StorageCategory.values:
        raise InvalidInput.for_field("storage_category", f"must be one of {', '.join(StorageCategory.values)}")
    if not category_fits(raw, storage_c):
        raise InvalidInput.for_field(
            "storage_category",
            f"{raw} does not fit a storage temperature of {storage_c:g} °C (that is {storage_category_for(storage_c)} storage)",
        )
    return raw


def _clean_attributes(raw: Any) -> list[tuple[str, float | None, float | None, float | None]]:
    registry = get_registry()
    attributes = []
    for index, item in enumerate(_items(raw, "attributes")):
        code = item.get("method_code")
        if code not in registry:
            raise InvalidInput.for_field(f"attributes.{index}.method_code", f"{code!r} is not an installed method")
        low = None if item.get("minimum") is None else _number(item["minimum"], f"attributes.{index}.minimum")
        high = None if item.get("maximum") is None else _number(item["maximum"], f"attributes.{index}.maximum")
        if low is None and high is None:
            raise InvalidInput.for_field(f"attributes.{index}", "needs an acceptance limit: minimum or maximum")
        if low is not None and high is not None and low > high:
            raise InvalidInput.for_field(f"attributes.{index}.minimum", "must not exceed the maximum")
        change = None
        if item.get("significant_change") is not None:
            change = _number(item["significant_change"], f"attributes.{index}.significant_change")
            if change <= 0:
                raise InvalidInput.for_field(f"attributes.{index}.significant_change", "must be above 0")
        if any(code == seen for seen, *_ in attributes):
            raise InvalidInput.for_field(f"attributes.{index}.method_code", "repeats another attribute")
        attributes.append((code, low, high, change))
    return attributes


def pull_timing(started_on: dt.date, offset: int, unit: str) -> tuple[dt.date, float]:
    """Due date and nominal elapsed months of a pull."""
    if unit == OffsetUnit.MONTHS:
        return started_on + relativedelta(months=offset), float(offset)
    return started_on + dt.timedelta(days=offset), offset / DAYS_PER_MONTH


def stability_study_create(
    actor: Actor,
    *,
    code: str,
    title: str,
    product: Product | int,
    lots: Sequence[int],
    started_on: dt.date,
    storage_temperature_c: float,
    claimed_shelf_life_months: float,
    conditions: Sequence[Mapping[str, Any]],
    pull_points: Sequence[Mapping[str, Any]],
    attributes: Sequence[Mapping[str, Any]],
    storage_category: str | None = None,
) -> StabilityStudy:
    """Create a study with its conditions, attributes and one pull point per condition,
    lot and time. Needs ``manage_stability_study`` (lab manager, QA, admin).
    ``storage_category`` (ICH Q1E) defaults to the category of the storage temperature;
    an attribute's optional ``significant_change`` is the change from the initial value
    that counts as significant at the accelerated and intermediate conditions."""
    require_permission(actor, "manage_stability_study", "create stability studies")
    code = required_text(code, "code")
    title = required_text(title, "title")
    if not isinstance(started_on, dt.date):
        raise InvalidInput.for_field("started_on", "must be a date")
    if started_on.year > 9000:  # the last pull must still be a date
        raise InvalidInput.for_field("started_on", "must be a date before the year 9000")
    storage = _number(storage_temperature_c, "storage_temperature_c", low=-40, high=120)
    category = _clean_category(storage_category, storage)
    claimed = _number(claimed_shelf_life_months, "claimed_shelf_life_months", low=0.1)
    clean_conditions = _clean_conditions(conditions)
    clean_pulls = _clean_pulls(pull_points)
    clean_attributes = _clean_attributes(attributes)
    if not isinstance(lots, (list, tuple)) or not lots:
        raise InvalidInput.for_field("lots", "must be a non-empty list of lot ids")
    key = UniqueKey(StabilityStudy, "code", code, f"study code {code!r} is already used")
    with key.insert():  # a concurrent create of the same code gets the same answer
        product = fetch(Product, product)
        lot_rows = []
        for index, lot_ref in enumerate(lots):
            try:
                lot = fetch(Lot, lot_ref)
            except DomainError:
                raise InvalidInput.for_field(f"lots.{index}", f"lot {lot_ref} not found") from None
            if lot.product_id != product.pk:
                raise InvalidInput.for_field(f"lots.{index}", f"lot {lot.code} is not a lot of {product.code}")
            if lot in lot_rows:  # its pull points would clash with the first one's
                raise InvalidInput.for_field(f"lots.{index}", f"repeats lot {lot.code}")
            lot_rows.append(lot)
        key.refuse_if_taken()
        study = StabilityStudy.objects.create(
            code=code, title=title, product=product, started_on=started_on, storage_temperature_c=storage,
            storage_category=category, claimed_shelf_life_months=claimed, created_by=actor, created_at=timezone.now(),
        )
        study.lots.set(lot_rows)
        audit_append(actor, AuditAction.CREATE, study, created(study, STUDY_FIELDS) | {"lots": [None, [lot.code for lot in lot_rows]]})
        for method_code, low, high, change in clean_attributes:
            attribute = StudyAttribute.objects.create(
                study=study, method_code=method_code, minimum=low, maximum=high, significant_change=change,
            )
            audit_append(actor, AuditAction.CREATE, attribute, created(attribute, ATTRIBUTE_FIELDS))
        pulls = []
        for temperature, light in clean_conditions:
            condition = StorageCondition.objects.create(study=study, temperature_c=temperature, light=light)
            audit_append(actor, AuditAction.CREATE, condition, created(condition, ("temperature_c", "light")))
            for lot in lot_rows:
                for offset, unit in clean_pulls:
                    due_on, months = pull_timing(started_on, offset, unit)
                    pulls.append(PullPoint(
                        study=study, condition=condition, lot=lot, offset=offset, offset_unit=unit,
                        elapsed_months=months, due_on=due_on,
                    ))
        PullPoint.objects.bulk_create(pulls)
        audit_append(actor, AuditAction.CREATE, study, {"pull_points": [None, len(pulls)]}, reason="pull schedule")
    return study


def stability_study_close(actor: Actor, study: StabilityStudy | int, *, reason: str) -> StabilityStudy:
    require_permission(actor, "manage_stability_study", "close stability studies")
    reason = required_text(reason, "reason")
    with transaction.atomic():
        study = fetch(StabilityStudy, study, lock=True)
        if study.state == StudyState.CLOSED:
            return study
        study.state = StudyState.CLOSED
        study.save(update_fields=["state"])
        audit_append(actor, AuditAction.TRANSITION, study, {"state": [StudyState.RUNNING, StudyState.CLOSED]}, reason=reason)
    return study


def _pull_take(actor: Actor, pull_id: int) -> bool:
    """Register and receive the pull's sample, once; False if another run took it first."""
    with transaction.atomic():
        pull = PullPoint.objects.select_for_update().select_related("study", "condition", "lot").get(pk=pull_id)
        if pull.sample_id is not None:
            return False
        study = pull.study
        methods = list(study.attributes.values_list("method_code", flat=True))
        label = f"{study.code}-{pull.condition.temperature_c:g}C-{pull.condition.light}-{pull.lot.code}-{pull.offset}{pull.offset_unit[0]}"
        sample = sample_register(actor, pull.lot, kind=SampleKind.STABILITY_PULL, label=label)
        sample_receive(
            actor, sample, condition=f"stability pull from {pull.condition}", storage_place=f"stability chamber {pull.condition}",
            methods=methods,
        )
        pull.sample = sample
        pull.pulled_at = timezone.now()
        pull.save(update_fields=["sample", "pulled_at"])
        audit_append(actor, AuditAction.CHANGE, pull, {"sample": [None, sample.label]}, lot_ref=pull.lot_id, sample_ref=sample.pk)
    return True


def stability_pulls_schedule(today: dt.date | None = None) -> ScheduleSummary:
    """Take every pull that has fallen due (exactly once) and flag overdue ones."""
    today = today or timezone.localdate()
    actor = scheduler_actor()
    summary = ScheduleSummary()
    due = PullPoint.objects.filter(study__state=StudyState.RUNNING, sample__isnull=True, due_on__lte=today)
    for pull_id in due.order_by("due_on", "id").values_list("id", flat=True):
        try:
            summary.pulls_taken += _pull_take(actor, pull_id)
        except DomainError as exc:  # e.g. no specification line for a method: the others go on
            summary.pulls_failed += 1
            logger.warning("stability pull %s could not be taken: %s", pull_id, exc.detail)
    summary.pulls_overdue, summary.alerts_raised = _overdue_flag(today)
    return summary


def _overdue_flag(today: dt.date) -> tuple[int, int]:
    cutoff = today - dt.timedelta(days=PULL_GRACE_DAYS)
    unfinished = Q(sample__isnull=True) | Q(open_tests__gt=0)
    overdue = list(
        PullPoint.objects.filter(study__state=StudyState.RUNNING, overdue_since__isnull=True, due_on__lt=cutoff)
        .annotate(open_tests=Count("sample__tests", filter=~Q(sample__tests__state__in=(TestState.ACCEPTED, TestState.CANCELLED, TestState.INVALIDATED))))
        .filter(unfinished)
        .select_related("study__product", "condition", "lot")
    )
    if not overdue:
        return 0, 0
    actor = scheduler_actor()
    with transaction.atomic():
        for pull in overdue:
            pull.overdue_since = today
            pull.save(update_fields=["overdue_since"])
            audit_append(actor, AuditAction.CHANGE, pull, {"overdue_since": [None, today]}, lot_ref=pull.lot_id)
        alerts = alerts_raise([
            AlertDraft(
                source=AlertSource.STABILITY, rule="pull_overdue", severity=AlertSeverity.WARNING,
                series_key=f"stability:{pull.study.code}", episode_key=f"stability:{pull.study.code}|pull_overdue|{pull.pk}",
                message=stability_alert_message(
                    "pull_overdue", pull.study, "", f"the {pull.offset} {pull.offset_unit} pull was due on {pull.due_on} and is not finished",
                    lot=pull.lot.code, condition=pull.condition,
                ),
                points=[{"pull_point": pull.pk, "due_on": pull.due_on.isoformat()}],
                product_id=pull.study.product_id, lot_id=pull.lot_id, study_id=pull.study_id,
            )
            for pull in overdue
        ], actor)
    return len(overdue), len(alerts)


def stability_study_evaluate(study: StabilityStudy | int) -> EvaluationOutcome:
    """Fit every attribute under every condition, estimate the shelf life (ICH Q1E and,
    with two or more temperatures, Arrhenius), store the evaluation and raise alerts
    for a predicted shelf life short of the claim or a pull result beyond its limit."""
    study = fetch(StabilityStudy, study)
    evaluation, drafts = study_evaluation(study)
    actor = scheduler_actor()
    with transaction.atomic():
        study = fetch(StabilityStudy, study, lock=True)
        if study.evaluation != evaluation:  # the same data evaluated again changes nothing
            before = (study.evaluation or {}).get("predicted_shelf_life_months")
            study.evaluation = evaluation
            study.evaluated_at = timezone.now()
            study.save(update_fields=["evaluation", "evaluated_at"])
            audit_append(actor, AuditAction.CHANGE, study, {"predicted_shelf_life_months": [before, evaluation["predicted_shelf_life_months"]]}, reason="evaluation")
        raised = alerts_raise(drafts, actor)
    return EvaluationOutcome(evaluation, len(raised))


def stability_studies_evaluate() -> int:
    """Evaluate every running study (the periodic catch-up); returns how many."""
    ids = list(StabilityStudy.objects.filter(state=StudyState.RUNNING).values_list("id", flat=True))
    for study_id in ids:
        stability_study_evaluate(study_id)
    return len(ids)
