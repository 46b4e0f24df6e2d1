"""Result entry: one replicate at a time, in bulk, and corrections as new versions.

A result keeps the raw inputs exactly as entered, the plugin's unrounded value, the
reported value (ASTM E29, ``MethodResult.reported``) and unit, the plugin code and
version, and its verdict against the specification line. When the last replicate of a
test arrives, the test gets the mean of its replicates (reported and judged the same way)
and the plugin's duplicate check, and moves to ``result_entered``.

Traceability (issue 9): an entry names the titrant lot and the instruments used
(``titrant_lot``, ``instruments``); the plugin receives the lot's current standardised
concentration as its ``titrant_concentration``, and the result keeps the lot, the
standardisation, the concentration and its uncertainty, and each instrument with the
calibration and check that made it usable (``analyses.services.result_trace``).

Idempotency: a result entered with ``idempotency_key`` is returned, not entered again,
when the same user sends the same key (a unique constraint backs this); the ``*_once``
functions say whether a call was such a replay. A batch key gives item i the key "<key>#i".
"""
from __future__ import annotations

import dataclasses
from dataclasses import dataclass
from collections.abc import Mapping, Sequence
from typing import Any

from decimal import Decimal, localcontext

from django.db import IntegrityError, transaction
from django.utils import timezone

from analyses.audit import audit_append, created, json_safe
from analyses.errors import Conflict, DomainError, InvalidInput, NotAllowed, NotFound
from analyses.models import (
    WORKABLE_TEST_STATES,
    AuditAction,
    Result,
    ResultStatus,
    Sample,
    Test,
    TestState,
)
from analyses.roles import role_permits
from analyses.services.access import (
    Actor,
    actor_name,
    fetch,
    refuse_raw_data_edit_by_qa,
    require_permission,
    required_text,
)
from analyses.services.cross_checks import cross_check_warnings, cross_checks_refresh_partners
from analyses.services.review_warnings import line_inputs, test_review_warnings
from analyses.services.result_trace import (
    Trace,
    refuse_typed_titrant,
    trace_for_entry,
    trace_is_complete,
    trace_of,
    trace_save,
)
from analyses.services.transitions import sample_require_workable
from analyses.services.uncertainty import result_uncertainty_record
from analyses.services.pull_judging import test_verdict
from labcore.metrics import RESULTS_ENTERED, count_on_commit
from plugins.contract import (
    MethodInputError,
    MethodPlugin,
    MethodResult,
    exact_context,
    split_parameter,
    stored_exact,
)
from plugins.registry import UnknownMethod, get_registry

RESULT_FIELDS = (
    "test", "replicate", "version", "status", "inputs", "value", "value_exact", "reported", "unit",
    "method_code", "method_version", "verdict", "duplicate_check", "supersedes", "correction_reason",
    "idempotency_key", "reagent_lot", "standardisation", "titrant_concentration", "titrant_uncertainty", "components",
)
AGGREGATE_FIELDS = ("value", "value_exact", "reported", "unit", "verdict", "duplicate_check", "review_warnings")
BULK_ITEM_KEYS = {"test", "inputs", "replicate", "idempotency_key", "titrant_lot", "instruments"}
KEY_MAX_CHARS = Result._meta.get_field("idempotency_key").max_length
# the characters a reported value may take, in a result and in its test
REPORTED_MAX_CHARS = min(Result._meta.get_field("reported").max_length, Test._meta.get_field("reported").max_length)


def plugin_of_test(test: Test) -> MethodPlugin:
    """The plugin of the test's method; Conflict when it is no longer registered."""
    try:
        return get_registry().get(test.method_code)
    except UnknownMethod as exc:
        raise Conflict(f"test {test.pk}: {exc}") from None


def method_outcome(plugin: MethodPlugin, test: Test, inputs: Any, trace: Trace) -> MethodResult:
    """The plugin's result for ``inputs`` with the trace's titrant concentration;
    MethodInputError becomes InvalidInput on ``inputs.<field>``."""
    if not isinstance(inputs, Mapping):
        raise InvalidInput.for_field("inputs", "must be an object of name=value pairs")
    try:
        outcome = plugin.calculate(trace.plugin_inputs(line_inputs(plugin, test.specification_line, inputs)))
        # a test of one component of a profile ("fac:C18:2") is judged on that component
        outcome = outcome.component(split_parameter(test.method_code)[1])
    except MethodInputError as exc:
        field = "inputs" if exc.field == "inputs" else f"inputs.{exc.field}"
        raise InvalidInput.for_field(field, exc.reason) from None
    line_unit = test.specification_line.unit
    if outcome.unit != line_unit:
        raise InvalidInput.for_field(
            "inputs", f"these inputs give a result in {outcome.unit}, but the specification limit is in {line_unit}"
        )
    _check_reportable(outcome.reported, outcome.unit)
    return outcome


def _check_reportable(reported: Any, unit: str) -> None:
    """InvalidInput on ``inputs`` when the reported value does not fit where it is kept
    (e.g. a sample mass of "1e-300" g gives an acid value of some 300 digits)."""
    if len(str(reported)) > REPORTED_MAX_CHARS:
        raise InvalidInput.for_field(
            "inputs", f"these inputs give a result too large to report ({float(reported):.4g} {unit}); check the values and units"
        )


@dataclass(frozen=True)
class Recorded:
    """A result an entry or correction returns, and whether the call was a replay: the
    result was recorded earlier under the same idempotency key and nothing was written."""

    result: Result
    replayed: bool


@dataclass(frozen=True)
class RecordedBatch:
    results: list[Result]
    replayed: bool  # every item was a replay


def clean_idempotency_key(idempotency_key: str | None) -> str | None:
    """The key stripped, or None; InvalidInput on ``idempotency_key`` when empty or too long."""
    if idempotency_key is None:
        return None
    if not isinstance(idempotency_key, str) or not idempotency_key.strip() or len(idempotency_key) > KEY_MAX_CHARS:
        raise InvalidInput.for_field("idempotency_key", f"must be 1 to {KEY_MAX_CHARS} characters")
    return idempotency_key.strip()


def check_may_enter(actor: Actor, test: Test) -> None:
    """NotAllowed unless the test is assigned to ``actor`` or the role may enter any result."""
    # the assignee first: asking the role's permission for every entry of a batch cost a hundredth of it
    if test.assignee_id != actor.pk and not role_permits(actor, "record_any_result"):
        whom = test.assignee.username if test.assignee_id else "nobody"
        raise NotAllowed(f"test {test.pk} is assigned to {whom}; {actor_name(actor)} may not enter its results")


def lock_test_row(test: Test | int) -> Test:
    """Lock the sample, then the test (the project's lock order)."""
    pk = test.pk if isinstance(test, Test) else test
    sample_id = Test.objects.filter(pk=pk).values_list("sample_id", flat=True).first()
    if sample_id is not None:
        Sample.objects.select_for_update().filter(pk=sample_id).first()
    locked = fetch(Test, pk, lock=True)
    return Test.objects.select_related("sample__lot", "specification_line", "assignee").get(pk=locked.pk)


def check_workable(test: Test) -> None:
    """The refusal of an entry on a test that is derived, not assigned or sent back, or whose
    sample may not be worked on."""
    from analyses.services.derived_tests import derived_entry_refusal  # it builds on this module

    refusal = derived_entry_refusal(test)
    if refusal is not None:
        raise refusal
    if test.state not in WORKABLE_TEST_STATES:
        raise Conflict(f"test {test.pk} is {test.state}; results can be entered only when it is assigned or sent back")
    sample_require_workable(test.sample)


def result_retire(actor: Actor, result: Result, status: str, *, reason: str, test: Test) -> None:
    """Take a current result of ``test`` out of use: superseded by a new version, or
    invalidated; ``reason`` kept on it and audited."""
    result.status, result.status_reason = status, reason
    result.save(update_fields=["status", "status_reason"])
    audit_append(
        actor, AuditAction.TRANSITION, result, {"status": [ResultStatus.CURRENT, status]},
        reason=reason, lot_ref=test.sample.lot_id, sample_ref=test.sample_id,
    )


def refuse_derived_correction(test: Test) -> None:
    """A derived result (TOTOX) follows its sources; it is never corrected by hand."""
    from analyses.services.derived_tests import derived_entry_refusal  # it builds on this module

    refusal = derived_entry_refusal(test, correcting=True)
    if refusal is not None:
        raise refusal


def exact_value(result: Result) -> Decimal:
    """The value a result is judged on: its exact decimal value, or for a row stored before
    exact values were kept, its float through the documented 15-digit guard."""
    return stored_exact(result.value_exact, result.value)


def replicate_values_with(test: Test, replicate: int, value: Decimal) -> list[Decimal]:
    """The values of the test's current replicates in replicate order, with ``value`` as
    replicate ``replicate`` (a correction's, its old result already superseded): the order an
    entry of the same readings gives the mean's duplicate check."""
    values = {r.replicate: exact_value(r) for r in test.results.filter(status=ResultStatus.CURRENT)}
    values[replicate] = value
    return [values[number] for number in sorted(values)]


def replicate_aggregate(plugin: MethodPlugin, test: Test, values: list[Decimal], unit: str) -> dict[str, Any]:
    """The test's result from its replicates: their mean in exact decimal arithmetic,
    reported and judged like a single result, and the plugin's duplicate check."""
    with localcontext(exact_context()):
        mean = sum(values) / len(values)
    check = plugin.duplicate_check(values)
    reported = str(plugin.report(mean))
    _check_reportable(reported, unit)
    return {
        "value": float(mean),
        "value_exact": str(mean),
        "reported": reported,
        "unit": unit,
        "verdict": test_verdict(mean, test),
        "duplicate_check": json_safe(dataclasses.asdict(check)),
    }


def set_test_aggregate(actor: Actor, test: Test, aggregate: dict[str, Any] | None, *, reason: str) -> None:
    """Store (or clear, with None) the test's aggregate fields, recording the change. The
    review warnings are worked out here, from the current replicates as stored."""
    warnings = None if aggregate is None else test_review_warnings(plugin_of_test(test), test, Decimal(aggregate["value_exact"]))
    before = {name: getattr(test, name) for name in AGGREGATE_FIELDS}
    apply_test_aggregate(test, aggregate, warnings or [])
    # results of other methods on the sample that chemistry ties to this one (services/cross_checks.py)
    if aggregate is not None:
        test.review_warnings = [*test.review_warnings, *cross_check_warnings(test)]
    cross_checks_refresh_partners(actor, test, reason=reason)
    changes = {name: [before[name], getattr(test, name)] for name in AGGREGATE_FIELDS if before[name] != getattr(test, name)}
    if changes:
        audit_append(
            actor, AuditAction.CHANGE, test, changes, reason=reason, lot_ref=test.sample.lot_id, sample_ref=test.sample_id
        )
    # a parameter worked out from this one (TOTOX from PV and AnV: services/derived_tests.py)
    from analyses.services.derived_tests import derived_tests_refresh  # it builds on this module

    derived_tests_refresh(actor, [test], reason=reason)


def apply_test_aggregate(test: Test, aggregate: dict[str, Any] | None, warnings: list[str]) -> dict[str, list[Any]]:
    """Set the test's aggregate fields (cleared with None) and its review ``warnings`` on the
    object, unsaved; the changes, for its audit entry."""
    before = {name: getattr(test, name) for name in AGGREGATE_FIELDS}
    cleared = {
        "value": None, "value_exact": "", "reported": "", "unit": "", "verdict": "", "duplicate_check": None,
        "review_warnings": [],
    }
    after = cleared if aggregate is None else {**aggregate, "review_warnings": warnings}
    for name, value in after.items():
        setattr(test, name, value)
    return {name: [before[name], after[name]] for name in AGGREGATE_FIELDS if before[name] != after[name]}


def new_result_fields(
    actor: Actor, test: Test, inputs: Any, outcome: MethodResult, aggregate: dict[str, Any] | None, trace: Trace
) -> dict[str, Any]:
    """What every new result row records: the raw inputs, the plugin's outcome, the verdict,
    the duplicate check once all replicates are in, the titrant lot and standardisation, and
    who entered it when."""
    return {
        **trace.result_fields(),
        "test": test,
        "inputs": json_safe(dict(inputs)),
        "value": outcome.value,
        "value_exact": str(outcome.judged),
        "reported": str(outcome.reported),
        "unit": outcome.unit,
        "method_code": outcome.code,
        "method_version": outcome.version,
        "components": outcome.components_as_dict(),
        "verdict": test_verdict(outcome.judged, test),
        "duplicate_check": aggregate["duplicate_check"] if aggregate else None,
        "entered_by": actor,
        "entered_at": timezone.now(),
    }


def result_created_changes(result: Result, trace: Trace) -> dict[str, Any]:
    """The audit entry's fields of a new result, with what it was measured with."""
    changes = created(result, RESULT_FIELDS)
    changes["measured_with"] = [None, trace.described]
    return changes


def replayed_result(
    first: Result, test: Test, inputs: Any, key: str, *, supersedes: int | None = None, reason: str = ""
) -> Result:
    """The result a repeated key returns; Conflict when the key was used for another request:
    another test, another result corrected (``supersedes``; None for a new entry), other
    inputs or another correction reason."""
    if first.test_id != test.pk:
        raise Conflict(f"idempotency key {key!r} was already used for test {first.test_id}")
    if first.supersedes_id != supersedes:
        used_for = f"a correction of result {first.supersedes_id}" if first.supersedes_id else f"result {first.pk}"
        raise Conflict(f"idempotency key {key!r} was already used for {used_for}")
    if not isinstance(inputs, Mapping) or first.inputs != json_safe(dict(inputs)):
        raise Conflict(f"idempotency key {key!r} was already used for result {first.pk} with other inputs")
    if first.correction_reason != reason:
        raise Conflict(f"idempotency key {key!r} was already used for result {first.pk} with another reason")
    return first


def _insert(result: Result, *, actor: Actor, key: str | None, test: Test) -> Result:
    """Insert ``result`` (a correction); a concurrent twin with the same idempotency key wins and is returned."""
    try:
        with transaction.atomic():
            result.save(force_insert=True)
    except IntegrityError:
        twin = Result.objects.filter(entered_by=actor, idempotency_key=key).first() if key else None
        if twin is None:
            raise Conflict(f"test {test.pk}: replicate {result.replicate} was entered at the same time by someone else") from None
        return replayed_result(twin, test, result.inputs, key, supersedes=result.supersedes_id, reason=result.correction_reason)
    count_on_commit(RESULTS_ENTERED)
    return result


def result_record_once(
    actor: Actor,
    test: Test | int,
    *,
    inputs: Mapping[str, Any],
    replicate: int | None = None,
    idempotency_key: str | None = None,
    titrant_lot: int | str | None = None,
    instruments: Sequence[int | str] | None = None,
) -> Recorded:
    """Enter one replicate of a test (the next free one, or ``replicate``), and say whether
    this was a replay. ``titrant_lot`` and ``instruments`` (ids, or the lot code and asset
    ids) name what it was measured with; the method's titrant concentration comes from the
    lot's current standardisation, and a lot or instrument that may not be used is a
    Conflict naming it.

    Only the test's assignee may enter (admins: any test); QA reviewers never. The test
    must be assigned or sent back, its sample workable and its lot open. Plugin input
    errors become InvalidInput on ``inputs.<field>``; nothing is written on any error.
    With ``idempotency_key``, a repeat by the same user (same test and inputs) returns the
    first result, ``replayed``; the key reused for anything else is a Conflict."""
    from analyses.services.result_batch import EntryRefused, EntryRequest, results_enter

    request = EntryRequest(test, inputs, replicate, idempotency_key, titrant_lot, instruments)
    try:
        [recorded] = results_enter(actor, [request])
    except EntryRefused as refused:
        raise refused.error from None
    return recorded


def result_record(
    actor: Actor,
    test: Test | int,
    *,
    inputs: Mapping[str, Any],
    replicate: int | None = None,
    idempotency_key: str | None = None,
    titrant_lot: int | str | None = None,
    instruments: Sequence[int | str] | None = None,
) -> Result:
    """``result_record_once`` for callers that need only the result."""
    return result_record_once(
        actor, test, inputs=inputs, replicate=replicate, idempotency_key=idempotency_key,
        titrant_lot=titrant_lot, instruments=instruments,
    ).result


def _prefixed(exc: DomainError, index: int) -> DomainError:
    """The same error, naming the bulk item: fields become ``results.<i>.<field>``."""
    prefix = f"results.{index}"
    if isinstance(exc, NotFound):  # in a batch, a missing test is bad input, not a missing page
        return InvalidInput.for_field(f"{prefix}.test", exc.detail)
    if isinstance(exc, InvalidInput):
        fields = {f"{prefix}.{name}": reasons for name, reasons in exc.fields.items()} or {prefix: [exc.detail]}
        return InvalidInput(f"{prefix}: {exc.detail}", fields)
    if isinstance(exc, Conflict):
        return Conflict(f"{prefix}: {exc.detail}", missing=exc.missing or [prefix])
    return type(exc)(f"{prefix}: {exc.detail}")


def result_record_bulk_once(
    actor: Actor, results: Sequence[Mapping[str, Any]], *, idempotency_key: str | None = None
) -> RecordedBatch:
    """Enter many results in one transaction, each item ``{"test", "inputs", "replicate"?,
    "idempotency_key"?, "titrant_lot"?, "instruments"?}``. With the batch's ``idempotency_key``, item i without its own
    key uses "<key>#i", so the whole batch can be retried. All or nothing: the first error
    rolls everything back and names the item, e.g. InvalidInput with fields
    ``{"results.2.inputs.sample_mass": [...]}``; an unknown test is InvalidInput on
    ``results.<i>.test``; refusals and conflicts keep their type, with the detail starting
    "results.<i>: ". ``replayed`` when every item was a replay (nothing was written)."""
    if isinstance(results, (str, bytes, Mapping)) or not isinstance(results, Sequence) or not results:
        raise InvalidInput.for_field("results", "give a list of at least one result")
    batch_key = clean_idempotency_key(idempotency_key)
    room = KEY_MAX_CHARS - len(f"#{len(results) - 1}")  # for the item keys "<key>#i"
    if batch_key and len(batch_key) > room:
        raise InvalidInput.for_field("idempotency_key", f"must be at most {room} characters for {len(results)} items")
    from analyses.services.result_batch import EntryRefused, EntryRequest, results_enter

    requests: list[EntryRequest | DomainError] = []
    for index, item in enumerate(results):
        if not isinstance(item, Mapping):
            requests.append(InvalidInput("must be an object", {}))
            continue
        unknown = sorted(set(item) - BULK_ITEM_KEYS)
        if unknown:
            requests.append(
                InvalidInput.for_field(unknown[0], f"is not a result field (expected: {', '.join(sorted(BULK_ITEM_KEYS))})")
            )
            continue
        if item.get("test") is None:
            requests.append(InvalidInput.for_field("test", "is required"))
            continue
        key = item.get("idempotency_key")
        if key is None and batch_key:
            key = f"{batch_key}#{index}"
        requests.append(
            EntryRequest(
                item["test"], item.get("inputs"), item.get("replicate"), key, item.get("titrant_lot"), item.get("instruments")
            )
        )
    try:
        recorded = results_enter(actor, requests)
    except EntryRefused as refused:
        raise _prefixed(refused.error, refused.index) from None
    return RecordedBatch([entry.result for entry in recorded], replayed=all(entry.replayed for entry in recorded))


def result_record_bulk(
    actor: Actor, results: Sequence[Mapping[str, Any]], *, idempotency_key: str | None = None
) -> list[Result]:
    """``result_record_bulk_once`` for callers that need only the results."""
    return result_record_bulk_once(actor, results, idempotency_key=idempotency_key).results


def result_correct_once(
    actor: Actor,
    result: Result | int,
    *,
    inputs: Mapping[str, Any],
    reason: str,
    idempotency_key: str | None = None,
    titrant_lot: int | str | None = None,
    instruments: Sequence[int | str] | None = None,
) -> Recorded:
    """Correct a current result: a new version with the new inputs and the mandatory
    ``reason`` is inserted and the old one marked superseded (it stays visible). Without
    ``titrant_lot`` and ``instruments`` the correction keeps what the result was measured
    with (judged usable when it was entered); naming either checks them as for an entry. Only
    before acceptance, by the test's assignee (admins: any). A complete test's mean,
    verdict and duplicate check are recomputed. With ``idempotency_key``, the same
    correction repeated returns the first one, ``replayed``."""
    refuse_raw_data_edit_by_qa(actor)  # first, so that QA hears why
    require_permission(actor, "record_result", "correct results")
    reason = required_text(reason, "reason")
    key = clean_idempotency_key(idempotency_key)
    pk = result.pk if isinstance(result, Result) else result
    test_id = Result.objects.filter(pk=pk).values_list("test_id", flat=True).first()
    if test_id is None:
        fetch(Result, pk)  # raises NotFound
    with transaction.atomic():
        test = lock_test_row(test_id)
        if key:
            first = Result.objects.filter(entered_by=actor, idempotency_key=key).first()
            if first is not None:
                return Recorded(replayed_result(first, test, inputs, key, supersedes=pk, reason=reason), replayed=True)
        old = fetch(Result, pk, lock=True)
        if old.status != ResultStatus.CURRENT:
            raise Conflict(f"result {old.pk} is {old.status}; only a current result can be corrected")
        refuse_derived_correction(test)
        check_may_enter(actor, test)
        if test.state not in (*WORKABLE_TEST_STATES, TestState.RESULT_ENTERED):
            raise Conflict(f"test {test.pk} is {test.state}; its results can no longer be corrected")
        sample_require_workable(test.sample)
        plugin = plugin_of_test(test)
        kept = trace_of(old)
        if titrant_lot is None and instruments is None and trace_is_complete(plugin, kept):
            refuse_typed_titrant(plugin, inputs)
            trace = kept
        else:
            trace = trace_for_entry(
                plugin, inputs,
                titrant_lot=titrant_lot if titrant_lot is not None else (kept.lot.pk if kept.lot else None),
                instruments=instruments if instruments is not None else ([u.instrument.pk for u in kept.uses] or None),
                now=timezone.now(),
            )
        outcome = method_outcome(plugin, test, inputs, trace)
        result_retire(actor, old, ResultStatus.SUPERSEDED, reason=reason, test=test)
        values = replicate_values_with(test, old.replicate, outcome.judged)
        complete = len(values) == test.replicates
        aggregate = replicate_aggregate(plugin, test, values, outcome.unit) if complete else None
        correction = Result(
            replicate=old.replicate, version=old.version + 1, supersedes=old, correction_reason=reason,
            idempotency_key=key, **new_result_fields(actor, test, inputs, outcome, aggregate, trace),
        )
        inserted = _insert(correction, actor=actor, key=key, test=test)
        if inserted is not correction:
            # a concurrent twin of this very request won; undo the superseding above
            transaction.set_rollback(True)
            return Recorded(inserted, replayed=True)
        trace_save(correction, trace)
        result_uncertainty_record(correction, aggregate)
        audit_append(
            actor, AuditAction.CREATE, correction, result_created_changes(correction, trace),
            reason=reason, lot_ref=test.sample.lot_id, sample_ref=test.sample_id,
        )
        if complete:
            set_test_aggregate(actor, test, aggregate, reason=f"result {old.pk} corrected: {reason}")
            test.save(update_fields=list(AGGREGATE_FIELDS))
    return Recorded(correction, replayed=False)


def result_correct(
    actor: Actor,
    result: Result | int,
    *,
    inputs: Mapping[str, Any],
    reason: str,
    idempotency_key: str | None = None,
    titrant_lot: int | str | None = None,
    instruments: Sequence[int | str] | None = None,
) -> Result:
    """``result_correct_once`` for callers that need only the correction."""
    return result_correct_once(
        actor, result, inputs=inputs, reason=reason, idempotency_key=idempotency_key,
        titrant_lot=titrant_lot, instruments=instruments,
    ).result
