"""Entering results as a set: one entry or a batch, in a fixed number of queries (issue 12).

``results_enter`` serves ``result_record_once`` (a batch of one) and ``result_record_bulk_once``.
It reads everything the batch needs at once, then checks the entries one by one in order
(in memory, against what the batch has read and what the entries before have added), then
writes them all:

1. the samples, then the tests, locked in one query each, ordered by id (the project's lock
   order: sample before test);
2. the earlier results under the batch's idempotency keys, and the tests' current replicates;
3. the titrant lots and instruments the batch names (``result_trace.trace_catalog``);
4. each entry checked and computed through its plugin (exact Decimal), as one entry alone is:
   the first refusal stops the batch and names the entry (``EntryRefused``), nothing written;
5. the results inserted at once (``row_writes.rows_insert``), their instrument uses and
   uncertainty budgets likewise, all with ids reserved in one query (``row_writes.ids_reserve``),
   the completed tests (mean, verdict, review warnings, state) with one update, and the batch's
   audit entries appended under one lock of the chain head, each with its own hash
   (``audit.audit_append_many``), in the order one entry at a time gives them.

The number of queries does not grow with the batch (see DEVELOPERS.md, "Result entry"); a
result entered before uncertainty budgets were kept costs a few more when its test completes.
"""
from __future__ import annotations

from collections.abc import Iterator, Mapping, Sequence
from dataclasses import dataclass, field
from decimal import Decimal
from typing import Any, NoReturn

from django.db import IntegrityError, transaction
from django.utils import timezone

from analyses.audit import PendingEntry, audit_append_many, created, json_safe
from analyses.errors import Conflict, DomainError, InvalidInput, NotFound
from analyses.row_writes import ids_reserve, new_row, rows_insert, rows_update
from analyses.models import (
    AuditAction, Result, ResultInstrument, ResultUncertainty, Test, TestState, TestUncertainty,
)
from analyses.selectors.results import current_results
from analyses.selectors.samples import samples_of_tests_locked, samples_with_lot
from analyses.selectors.tests import tests_locked
from analyses.services.access import ID_MAX, Actor, refuse_raw_data_edit_by_qa, require_permission
from analyses.services.derived_tests import derived_tests_refresh
from analyses.services.cross_checks import cross_check_partners, cross_check_warnings, cross_checks_refresh_partners
from analyses.services.result_trace import Trace, TraceCatalog, trace_catalog, trace_for_entry, trace_save_many
from analyses.services.results import (
    AGGREGATE_FIELDS,
    Recorded,
    apply_test_aggregate,
    check_may_enter,
    check_workable,
    clean_idempotency_key,
    exact_value,
    method_outcome,
    new_result_fields,
    plugin_of_test,
    replayed_result,
    replicate_aggregate,
    result_created_changes,
)
from analyses.services.review_warnings import test_review_warnings
from analyses.services.uncertainty import (
    AUDITED_FIELDS,
    budget_source,
    entry_budget,
    stored_budget_dict,
    stored_budget_fields,
    traced_source,
)
from analyses.services.pull_judging import test_verdict
from labcore.metrics import RESULTS_ENTERED, count_on_commit
from plugins.contract import MethodPlugin
from plugins.uncertainty import Budget, mean_budget

MEAN_REASON = "the mean of the current replicates"


@dataclass(frozen=True)
class EntryRequest:
    """One entry as asked: the test (an id or the test), the inputs as entered, and optionally
    the replicate, the idempotency key, the titrant lot and the instruments."""

    test: Any
    inputs: Any
    replicate: Any = None
    idempotency_key: Any = None
    titrant_lot: Any = None
    instruments: Any = None


class EntryRefused(Exception):
    """Entry ``index`` of the batch was refused with ``error``; nothing was written."""

    def __init__(self, index: int, error: DomainError):
        super().__init__(index, error)
        self.index = index
        self.error = error


@dataclass
class _NewEntry:
    index: int
    test: Test
    plugin: MethodPlugin
    trace: Trace
    result: Result
    # set when this entry completes its test: the mean's fields, the state it leaves, and
    # the test's current replicates with this one, by replicate number
    aggregate: dict[str, Any] | None = None
    left_state: str = ""
    current: list[Result] = field(default_factory=list)
    budget: Budget | None = None
    mean: Budget | None = None
    # the inputs as the plugin validated them to compute the result, for its budget, and
    # whether the result stores them as given (then they are its review warnings' inputs too)
    values: Mapping[str, Any] | None = None
    values_as_stored: bool = False


def _test_id(ref: Any) -> int | None:
    if isinstance(ref, Test):
        return ref.pk
    if isinstance(ref, str) and ref.strip().isdigit():
        ref = int(ref)
    if isinstance(ref, int) and not isinstance(ref, bool) and 1 <= ref <= ID_MAX:
        return ref
    return None


def _lenient_key(raw: Any) -> str | None:
    try:
        return clean_idempotency_key(raw)
    except InvalidInput:
        return None


def _named_instruments(raw: Any) -> list[Any]:
    return list(raw) if isinstance(raw, (list, tuple)) else []


def results_enter(actor: Actor, requests: Sequence[EntryRequest | DomainError]) -> list[Recorded]:
    """Enter ``requests`` all or nothing, in order; an item that is already an error (the
    caller found it malformed) is refused when its turn comes. EntryRefused names the first
    entry refused. Each entry is checked as ``result_record_once`` documents."""
    try:
        refuse_raw_data_edit_by_qa(actor)  # first, so that QA hears why
        require_permission(actor, "record_result", "enter results")
    except DomainError as exc:
        raise EntryRefused(0, exc) from None
    try:
        with transaction.atomic():
            batch = _Batch(actor, requests)
            recorded = []
            for index, request in enumerate(requests):
                try:
                    recorded.append(batch.check(index, request))
                except DomainError as exc:
                    raise EntryRefused(index, exc) from None
            batch.write()
    except _InsertMetTwin:
        # rolled back, so the connection can read the row that won (no savepoint of its own
        # around the insert: two queries fewer per batch)
        batch.refuse_concurrent()
    return recorded


def _reserved(ids: dict[type, list[int]] | None, model: type) -> list[int] | None:
    return None if ids is None else ids[model]


class _InsertMetTwin(Exception):
    """The results' insert met a row another request committed after the batch's reads."""


class _Batch:
    """What a batch has read, and the entries it has checked and will write."""

    def __init__(self, actor: Actor, requests: Sequence[EntryRequest | DomainError]):
        self.actor = actor
        self.now = timezone.now()
        asked = [r for r in requests if isinstance(r, EntryRequest)]
        test_ids = sorted({pk for pk in (_test_id(r.test) for r in asked) if pk is not None})
        self.tests: dict[int, Test] = {}
        self.current: dict[int, dict[int, Result]] = {}
        if test_ids:
            # the project's lock order: the samples, then the tests; both by id
            sample_ids = samples_of_tests_locked(test_ids)
            # each sample read once, with its lot and product, and shared by its tests (joined to
            # every test, it was read and built again for each: issue 12); read once the samples
            # are locked, so that a lot changed while the lock was awaited is read as it now is
            samples = samples_with_lot(sample_ids)
            # with the mean's stored budget: current, since its every writer locks the test's
            # sample first, as above (a lock wait re-reads the test's row, not the joined one)
            for test in tests_locked(test_ids):
                if test.sample_id in samples:  # else (a test made meanwhile) it is read when needed
                    test.sample = samples[test.sample_id]
                self.tests[test.pk] = test
            self.current = {pk: {} for pk in self.tests}
            for result in current_results(list(self.tests)):
                self.current[result.test_id][result.replicate] = result
        keys = {key for key in (_lenient_key(r.idempotency_key) for r in asked) if key}
        self.earlier: dict[str, Result] = {}
        if keys:
            self.earlier = {
                r.idempotency_key: r
                for r in Result.objects.filter(entered_by=actor, idempotency_key__in=keys)
                .select_related("entered_by", "reagent_lot")
                .prefetch_related("instrument_uses__instrument")
            }
        self.catalog: TraceCatalog = trace_catalog(
            [r.titrant_lot for r in asked if r.titrant_lot not in (None, "")],
            [ref for r in asked for ref in _named_instruments(r.instruments)],
        )
        self.entered_by_key: dict[str, _NewEntry] = {}
        self.new: list[_NewEntry] = []

    # --- checking, entry by entry ------------------------------------------------------
    def check(self, index: int, request: EntryRequest | DomainError) -> Recorded:
        if isinstance(request, DomainError):
            raise request
        key = clean_idempotency_key(request.idempotency_key)
        replicate = request.replicate
        if replicate is not None and (isinstance(replicate, bool) or not isinstance(replicate, int)):
            raise InvalidInput.for_field("replicate", "must be a whole number")
        test = self.tests.get(_test_id(request.test))
        if test is None:
            ref = request.test.pk if isinstance(request.test, Test) else request.test
            raise NotFound(f"test {ref} not found")
        if key:
            replayed = self._replay(key, test, request)
            if replayed is not None:
                return replayed
        check_may_enter(self.actor, test)
        check_workable(test)
        current = self.current[test.pk]
        if replicate is None:
            free = [n for n in range(1, test.replicates + 1) if n not in current]
            if not free:
                raise Conflict(f"test {test.pk} has all {test.replicates} replicate(s); correct one instead")
            replicate = free[0]
        elif not 1 <= replicate <= test.replicates:
            raise InvalidInput.for_field("replicate", f"must be between 1 and {test.replicates}")
        elif replicate in current:
            raise Conflict(f"test {test.pk} already has replicate {replicate} (result {current[replicate].pk}); correct it instead")
        plugin = plugin_of_test(test)
        trace = trace_for_entry(
            plugin, request.inputs, titrant_lot=request.titrant_lot, instruments=request.instruments, now=self.now,
            catalog=self.catalog,
        )
        outcome = method_outcome(plugin, test, request.inputs, trace)
        earlier = [current[n] for n in sorted(current)]
        values = [exact_value(r) for r in earlier] + [outcome.judged]
        complete = len(values) == test.replicates
        aggregate = replicate_aggregate(plugin, test, values, outcome.unit) if complete else None
        result = new_row(
            Result, replicate=replicate, idempotency_key=key,
            **new_result_fields(self.actor, test, request.inputs, outcome, aggregate, trace),
        )
        entry = _NewEntry(
            index, test, plugin, trace, result, values=outcome.inputs, values_as_stored=result.inputs == dict(request.inputs)
        )
        current[replicate] = result
        if complete:
            entry.aggregate = aggregate
            entry.left_state = test.state
            entry.current = sorted(current.values(), key=lambda r: r.replicate)
            test.state = TestState.RESULT_ENTERED  # a later entry for this test is refused, as it would be
        if key:
            self.entered_by_key[key] = entry
        self.new.append(entry)
        return Recorded(result, replayed=False)

    def _replay(self, key: str, test: Test, request: EntryRequest) -> Recorded | None:
        """The result a repeated key returns (entered earlier, or by an entry before in this
        batch), checked to be the same request; None for a new key."""
        first = self.earlier.get(key)
        if first is not None:
            used = [(u.instrument_id, u.instrument.asset_id) for u in first.instrument_uses.all()]
            lot = first.reagent_lot
        elif key in self.entered_by_key:
            entry = self.entered_by_key[key]
            first, lot = entry.result, entry.trace.lot
            used = [(u.instrument.pk, u.instrument.asset_id) for u in entry.trace.uses]
        else:
            return None
        _check_same_trace(first, key, request.titrant_lot, request.instruments, lot=lot, used=used)
        return Recorded(replayed_result(first, test, request.inputs, key), replayed=True)

    # --- writing, all at once ----------------------------------------------------------
    def write(self) -> None:
        if not self.new:
            return
        self._judge_by_uncertainty()
        means_before = self._means_before()
        results = [entry.result for entry in self.new]
        with_budget = [entry for entry in self.new if entry.budget is not None]
        # every id the batch's inserts need, in one query
        ids = ids_reserve({
            Result: len(results),
            ResultInstrument: sum(len(entry.trace.uses) for entry in self.new),
            ResultUncertainty: len(with_budget),
            TestUncertainty: sum(1 for entry in self.new if entry.mean is not None and entry.test.pk not in means_before),
        })
        try:
            rows_insert(results, ids=_reserved(ids, Result))
        except IntegrityError as exc:
            raise _InsertMetTwin from exc
        trace_save_many(((entry.result, entry.trace) for entry in self.new), ids=_reserved(ids, ResultInstrument))
        budgets = {
            entry.index: new_row(ResultUncertainty, result=entry.result, **stored_budget_fields(entry.budget))
            for entry in with_budget
        }
        rows_insert(list(budgets.values()), ids=_reserved(ids, ResultUncertainty))
        means = self._save_means(means_before, ids=_reserved(ids, TestUncertainty))
        completed = [entry for entry in self.new if entry.aggregate is not None]
        validated = {id(entry.result): entry.values for entry in self.new if entry.values_as_stored}
        changes = {
            entry.index: apply_test_aggregate(
                entry.test, entry.aggregate,
                test_review_warnings(
                    entry.plugin, entry.test, Decimal(entry.aggregate["value_exact"]), current=entry.current,
                    expanded=str(entry.mean.expanded) if entry.mean is not None else None,
                    validated={r.replicate: validated[id(r)] for r in entry.current if id(r) in validated},
                ),
            )
            for entry in completed
        }
        partners = cross_check_partners([entry.test for entry in completed]) if completed else {}
        for entry in completed:
            # results of other methods on the sample that chemistry ties to this one (services/cross_checks.py)
            extra = cross_check_warnings(entry.test, partners[entry.test.pk])
            if extra:
                before = changes[entry.index].get("review_warnings", [entry.test.review_warnings])[0]
                entry.test.review_warnings = [*entry.test.review_warnings, *extra]
                changes[entry.index]["review_warnings"] = [before, entry.test.review_warnings]
        if completed:
            rows_update([entry.test for entry in completed], ["state", *AGGREGATE_FIELDS])
        # each entry made as the audit trail's COPY takes it (audit._entries_stream); what may
        # read the database (a test's sample not read with the batch) is read before it begins
        refs = {entry.test.pk: {"lot_ref": entry.test.sample.lot_id, "sample_ref": entry.test.sample_id} for entry in self.new}
        # no savepoint of the audit's own: any error ends results_enter's atomic block, rolled back
        audit_append_many(self._audit_entries(budgets, means, changes, refs), entries_back=False, savepoint=False)
        # parameters worked out from these means (TOTOX from PV and AnV: services/derived_tests.py)
        derived_tests_refresh(self.actor, [entry.test for entry in completed], reason=MEAN_REASON)
        in_batch = {entry.test.pk for entry in completed}
        for entry in completed:
            # partners outside the batch take this result into their own warnings (audited); a
            # partner completed in this same batch has just worked out its own
            outside = [p for p in partners[entry.test.pk] if p.pk not in in_batch]
            if outside:
                cross_checks_refresh_partners(self.actor, entry.test, reason=MEAN_REASON, partners=outside)
        count_on_commit(RESULTS_ENTERED, len(self.new))

    def _judge_by_uncertainty(self) -> None:
        """Each result's budget and its verdict by the line's decision rule; for a completed
        test, the mean's budget and verdict (``uncertainty.result_uncertainty_record`` for
        one result)."""
        sources: dict[str, Any] = {}
        traced: dict[tuple, Any] = {}
        entry_of = {id(entry.result): entry for entry in self.new}
        for entry in self.new:
            code = entry.plugin.code
            if code not in sources:
                sources[code] = budget_source(entry.plugin)
            uses = [(u.instrument, self.catalog.calibrations[u.calibration_id]) for u in entry.trace.uses]
            source = traced_source(sources[code], entry.result, uses, traced)
            entry.budget = entry_budget(entry.result, entry.plugin, source, values=entry.values)
            if entry.budget is None:
                continue
            entry.result.verdict = test_verdict(Decimal(entry.result.value_exact), entry.test, entry.budget.expanded)
            if entry.aggregate is None:
                continue
            budgets = [self._budget_dict(r, entry_of) for r in entry.current]
            if any(b is None for b in budgets):
                continue
            entry.mean = mean_budget(budgets)
            entry.aggregate["verdict"] = test_verdict(Decimal(entry.aggregate["value_exact"]), entry.test, entry.mean.expanded)

    def _budget_dict(self, result: Result, entry_of: dict[int, _NewEntry]) -> dict[str, Any] | None:
        if result.pk is None:  # entered in this batch
            entry = entry_of[id(result)]
            return None if entry.budget is None else entry.budget.as_dict()
        return stored_budget_dict(result)

    def _means_before(self) -> dict[int, TestUncertainty]:
        """The stored mean's budget of each test this batch completes with a mean's budget, by
        test id (read with the locked tests)."""
        stored = ((entry.test.pk, getattr(entry.test, "uncertainty", None)) for entry in self.new if entry.mean is not None)
        return {pk: row for pk, row in stored if row is not None}

    def _save_means(
        self, before: dict[int, TestUncertainty], *, ids: list[int] | None
    ) -> dict[int, tuple[TestUncertainty, TestUncertainty | None]]:
        """The mean's budget of each completed test, created (with the ``ids`` reserved) or
        replaced (``before``: the stored ones); per entry index, the row and the row it
        replaced (None when new)."""
        with_mean = [entry for entry in self.new if entry.mean is not None]
        if not with_mean:
            return {}
        rows: dict[int, tuple[TestUncertainty, TestUncertainty | None]] = {}
        fresh, replaced = [], []
        for entry in with_mean:
            fields = {"results": [r.pk for r in entry.current], **stored_budget_fields(entry.mean)}
            old = before.get(entry.test.pk)
            if old is None:
                row = new_row(TestUncertainty, test=entry.test, **fields)
                fresh.append(row)
                rows[entry.index] = (row, None)
            else:
                kept = TestUncertainty(**{f.attname: getattr(old, f.attname) for f in TestUncertainty._meta.concrete_fields})
                for name, value in fields.items():
                    setattr(old, name, value)
                replaced.append(old)
                rows[entry.index] = (old, kept)
        rows_insert(fresh, ids=ids)
        if replaced:
            rows_update(replaced, ["results", "budget", "combined", "coverage_factor", "expanded", "source", "computed_at"])
        return rows

    def _audit_entries(self, budgets, means, changes, refs: dict[int, dict[str, Any]]) -> Iterator[PendingEntry]:
        """The entries one entry at a time would append, in the same order: the result's
        budget, the mean's budget, the result, the test's mean and its move to result_entered.
        Made from what the batch holds, reading nothing: ``refs`` gives each test's lot and
        sample refs."""
        for entry in self.new:
            test, actor = entry.test, self.actor
            ref = refs[test.pk]
            if entry.index in budgets:
                row = budgets[entry.index]
                yield PendingEntry(actor, AuditAction.CREATE, row, created(row, AUDITED_FIELDS + ("result",)), **ref)
            if entry.index in means:
                row, old = means[entry.index]
                mean_changes = {
                    name: [None if old is None else json_safe(getattr(old, name)), json_safe(getattr(row, name))]
                    for name in (*AUDITED_FIELDS, "results")
                }
                action = AuditAction.CREATE if old is None else AuditAction.CHANGE
                yield PendingEntry(actor, action, row, mean_changes, reason=MEAN_REASON, **ref)
            yield PendingEntry(actor, AuditAction.CREATE, entry.result, result_created_changes(entry.result, entry.trace), **ref)
            if entry.aggregate is not None:
                if changes[entry.index]:
                    yield PendingEntry(actor, AuditAction.CHANGE, test, changes[entry.index], reason="all replicates entered", **ref)
                moved = {"state": [entry.left_state, TestState.RESULT_ENTERED]}
                yield PendingEntry(actor, AuditAction.TRANSITION, test, moved, **ref)

    def refuse_concurrent(self) -> NoReturn:
        """The insert met a row written meanwhile by another request (the tests are locked,
        so only a key used at the same time for another test can do this): the refusal of
        the first entry concerned. Called once the batch's transaction is rolled back."""
        keys = [entry.result.idempotency_key for entry in self.new if entry.result.idempotency_key]
        twins = {r.idempotency_key: r for r in Result.objects.filter(entered_by=self.actor, idempotency_key__in=keys)}
        for entry in self.new:
            twin = twins.get(entry.result.idempotency_key)
            if twin is not None:
                try:
                    replayed_result(twin, entry.test, entry.result.inputs, entry.result.idempotency_key)
                except Conflict as exc:
                    raise EntryRefused(entry.index, exc) from None
                raise EntryRefused(
                    entry.index,
                    Conflict(f"idempotency key {entry.result.idempotency_key!r} was used at the same time by another request; send it again"),
                )
        first = self.new[0]
        raise EntryRefused(
            first.index,
            Conflict(f"test {first.test.pk}: replicate {first.result.replicate} was entered at the same time by someone else"),
        )


def _check_same_trace(first: Result, key: str, titrant_lot: Any, instruments: Any, *, lot, used) -> None:
    """Conflict when a repeated key names another titrant lot or other instruments than the
    result it first recorded (each as an id or a code): ``lot`` and ``used`` (instrument id,
    asset id) are what that result was measured with."""
    if titrant_lot not in (None, ""):
        if lot is None or titrant_lot not in (lot.pk, lot.code):
            raise Conflict(f"idempotency key {key!r} was already used for result {first.pk} with another titrant lot")
    if instruments is not None:
        named = list(instruments) if isinstance(instruments, (list, tuple)) else [instruments]
        if len(named) != len(used) or any(not any(ref in pair for pair in used) for ref in named):
            raise Conflict(f"idempotency key {key!r} was already used for result {first.pk} with other instruments")

