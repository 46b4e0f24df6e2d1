"""Derived tests: a method worked out from other methods' results on the same sample.

A plugin with ``derived_from`` (TOTOX = 2 PV + AnV: ``plugins/totox.py``) is a specification
parameter like any other, with its own line, limits, verdict, review and certificate row, but
nobody enters it. Whenever the mean of one of its source tests is set or cleared (entry,
correction, send-back, invalidation), ``derived_tests_refresh`` works the derived tests of the
sample out again:

- every source has a standing mean (not invalidated, not cancelled): the derived test gets one
  result from those means, exactly as written, entered by whoever completed the last source,
  and waits for review; a new source mean, or a source budget that changed under the same mean
  (a replicate corrected to the same reading on other instruments), supersedes that result
  with a new version;
- a source mean was cleared: the derived result is invalidated, the test's mean cleared, and the
  test waits (pending) for the sources again.

Each change is audited. Review accepts a derived test only after its sources are accepted, and
it is never sent back: its sources are (``derived_review_refusal``).
"""
from __future__ import annotations

from collections.abc import Iterable
from decimal import Decimal

from analyses.audit import audit_append, created, json_safe
from analyses.errors import Conflict
from analyses.models import AuditAction, Result, ResultStatus, ResultUncertainty, Test, TestState, TestUncertainty
from analyses.services.access import Actor
from analyses.services.result_trace import Trace
from plugins.contract import MethodPlugin, split_parameter
from plugins.registry import UnknownMethod, get_registry

# a derived test in one of these states follows its sources; an accepted one is final
FOLLOWING = (TestState.PENDING, TestState.ASSIGNED, TestState.RESULT_ENTERED, TestState.SENT_BACK)
NOT_STANDING = (TestState.INVALIDATED, TestState.CANCELLED)


def derived_methods() -> dict[str, MethodPlugin]:
    """The registered derived methods by code."""
    registry = get_registry()
    return {code: registry.get(code) for code in registry.codes() if registry.get(code).derived_from}


def _derived_method(code: str) -> MethodPlugin | None:
    """``derived_methods().get(code)`` without building the whole dict: it is asked for every
    entry of a batch and every test reviewed."""
    if split_parameter(code)[1]:  # a component of a profile is never a derived method's code
        return None
    try:
        plugin = get_registry().get(code)
    except UnknownMethod:
        return None
    return plugin if plugin.derived_from else None


def _standing_sources(sample_ids: set[int], codes: set[str], given: dict[int, Test]) -> dict[tuple[int, str], Test]:
    """Per (sample, method), the latest test with a standing mean; ``given`` tests (their new
    means perhaps not saved yet) stand in for their rows."""
    latest: dict[tuple[int, str], Test] = {}
    rows = Test.objects.filter(sample_id__in=sample_ids, method_code__in=codes).order_by("pk")
    for row in rows:
        test = given.get(row.pk, row)
        if test.state not in NOT_STANDING and test.value_exact:
            latest[(test.sample_id, test.method_code)] = test
    return latest


def derived_tests_refresh(
    actor: Actor, tests: Iterable[Test], *, reason: str, accepted: bool = False, entered_by: Actor | None = None
) -> list[Test]:
    """Work out again the derived tests fed by ``tests`` (whose means were just set or cleared);
    the derived tests given a new result. With ``accepted``, the accepted ones instead (a source
    corrected after release, approved by QA: they stay accepted with their new result). A new
    result is entered by ``entered_by`` (default ``actor``: whoever completed the source), and
    every change is audited under ``actor``. Runs inside the caller's transaction."""
    from analyses.services.results import (
        RESULT_FIELDS, method_outcome, new_result_fields, replicate_aggregate, result_retire, set_test_aggregate,
    )
    from analyses.services.uncertainty import SourceMeansBudget, budget_source, result_uncertainty_record

    methods = derived_methods()
    feeding = {code for plugin in methods.values() for code in plugin.derived_from.values()}
    given = {test.pk: test for test in tests if test.method_code in feeding}
    if not given:
        return []
    sample_ids = {test.sample_id for test in given.values()}
    derived = list(
        Test.objects.select_for_update()
        .select_related("sample__lot__product", "specification_line")
        .filter(sample_id__in=sample_ids, method_code__in=methods, state__in=(TestState.ACCEPTED,) if accepted else FOLLOWING)
        .order_by("pk")
    )
    if not derived:
        return []
    renewed = []
    sources = _standing_sources(sample_ids, feeding, given)
    stored_means = _stored_mean_budgets(sources.values())
    for test in derived:
        plugin = methods[test.method_code]
        current = test.results.select_for_update().filter(status=ResultStatus.CURRENT).first()
        feeds = {name: sources.get((test.sample_id, code)) for name, code in plugin.derived_from.items()}
        if all(feeds.values()):
            inputs = {name: str(Decimal(source.value_exact)) for name, source in feeds.items()}
            # the sources' budgets carry over, so a source corrected to the same mean with
            # other instruments changes this result's budget, and perhaps its verdict
            means = {name: (source, stored_means.get(source.pk)) for name, source in feeds.items()}
            carried = SourceMeansBudget(budget_source(plugin), means)
            if current is not None and current.inputs == inputs and _budget_unchanged(current, carried):
                continue
            trace = Trace()
            outcome = method_outcome(plugin, test, inputs, trace)
            aggregate = replicate_aggregate(plugin, test, [outcome.judged], outcome.unit)
            why = f"worked out from {', '.join(f'{source.method_code} test {source.pk}' for source in feeds.values())}: {reason}"
            result = Result(replicate=1, **new_result_fields(entered_by or actor, test, inputs, outcome, aggregate, trace))
            if current is not None:
                result_retire(actor, current, ResultStatus.SUPERSEDED, reason=why, test=test)
                result.version, result.supersedes, result.correction_reason = current.version + 1, current, why
            result.save(force_insert=True)
            # its budget, the sources' budgets carried over, and the verdict by the line's rule;
            # then its audit entry, which records the verdict so decided (as an entry's does)
            result_uncertainty_record(result, aggregate, source=carried)
            audit_append(actor, AuditAction.CREATE, result, created(result, RESULT_FIELDS), reason=why,
                         lot_ref=test.sample.lot_id, sample_ref=test.sample_id)
            set_test_aggregate(actor, test, aggregate, reason=why)
            if test.state not in (TestState.RESULT_ENTERED, TestState.ACCEPTED):
                _move(actor, test, TestState.RESULT_ENTERED, why)
            test.save()
            renewed.append(test)
        elif current is not None and not accepted:
            why = f"a source mean was withdrawn: {reason}"
            result_retire(actor, current, ResultStatus.INVALIDATED, reason=why, test=test)
            set_test_aggregate(actor, test, None, reason=why)
            _move(actor, test, TestState.PENDING, why)
            test.save()
    return renewed


def accepted_derived_tests_of(test: Test) -> list[Test]:
    """The accepted derived tests of ``test``'s sample whose current result was worked out from
    ``test``'s mean (locked)."""
    if not test.value_exact:
        return []
    inputs_of = {
        code: [name for name, source in plugin.derived_from.items() if source == test.method_code]
        for code, plugin in derived_methods().items()
    }
    codes = [code for code, names in inputs_of.items() if names]
    if not codes:
        return []
    mean = str(Decimal(test.value_exact))
    candidates = (
        Test.objects.select_for_update(of=("self",)).select_related("sample", "specification_line")
        .filter(sample_id=test.sample_id, method_code__in=codes, state=TestState.ACCEPTED).order_by("pk")
    )
    found = []
    for derived in candidates:
        current = derived.results.filter(status=ResultStatus.CURRENT).first()
        if current is not None and any(current.inputs.get(name) == mean for name in inputs_of[derived.method_code]):
            found.append(derived)
    return found


def standing_sources_of(test: Test) -> list[Test]:
    """For a derived test, the accepted tests of the sample its sources stand on now (locked);
    else none. A derived test is accepted only after them, so a TOTOX under investigation has
    them all."""
    plugin = _derived_method(test.method_code)
    if plugin is None:
        return []
    codes = set(plugin.derived_from.values())
    standing = _standing_sources({test.sample_id}, codes, {})
    ids = sorted(source.pk for source in standing.values() if source.state == TestState.ACCEPTED)
    return list(
        Test.objects.select_for_update(of=("self",)).select_related("sample", "specification_line").filter(pk__in=ids).order_by("pk")
    )


def _budget_unchanged(result: Result, carried) -> bool:
    """Whether ``result``'s stored budget is the one ``carried`` (its sources' budgets now) gives."""
    from analyses.services.uncertainty import budget_of

    budget = budget_of(result, source=carried)
    stored = ResultUncertainty.objects.filter(result=result).values_list("budget", flat=True).first()
    return (None if budget is None else json_safe(budget.as_dict())) == stored


def _stored_mean_budgets(tests: Iterable[Test]) -> dict[int, TestUncertainty]:
    """The stored mean's budget of each test, by test id, where it is of the test's current
    replicates (a mean whose budget could not be worked out keeps an older row, which is not)."""
    from analyses.services.uncertainty import is_mean_of

    ids = [test.pk for test in tests]
    current: dict[int, set[int]] = {}
    for test_id, result_id in Result.objects.filter(test_id__in=ids, status=ResultStatus.CURRENT).values_list("test_id", "pk"):
        current.setdefault(test_id, set()).add(result_id)
    return {
        row.test_id: row
        for row in TestUncertainty.objects.filter(test_id__in=ids)
        if is_mean_of(row.results, current.get(row.test_id, set()))
    }


def _move(actor: Actor, test: Test, target: str, reason: str) -> None:
    from analyses.services.transitions import record_test_move

    record_test_move(actor, test, target, reason=reason)


def derived_review_refusal(test: Test, *, sending_back: bool) -> Conflict | None:
    """Why a derived test cannot be reviewed so now, or None: it is never sent back (its sources
    are), and it is accepted only after every source test is."""
    plugin = _derived_method(test.method_code)
    if plugin is None:
        return None
    sources = ", ".join(plugin.derived_from.values())
    if sending_back:
        return Conflict(f"test {test.pk} ({test.method_code}) is worked out from the {sources} results; send those back instead")
    waiting = Test.objects.filter(sample_id=test.sample_id, method_code__in=plugin.derived_from.values()).exclude(
        state__in=(TestState.ACCEPTED, *NOT_STANDING)
    )
    if waiting.exists():
        return Conflict(f"test {test.pk} ({test.method_code}) is worked out from the {sources} results; accept those first")
    return None


def derived_entry_refusal(test: Test, *, correcting: bool = False) -> Conflict | None:
    """A derived test takes no entry, and no correction, by hand."""
    plugin = _derived_method(test.method_code)
    if plugin is None:
        return None
    sources = " and ".join(plugin.derived_from.values())
    worked_out = f"test {test.pk} ({test.method_code}) is worked out from the sample's {sources} results"
    return Conflict(f"{worked_out}; correct those instead" if correcting else f"{worked_out}; it is not entered")
