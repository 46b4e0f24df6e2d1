"""Synthetic lab history for ``list_benchmark``: lots, samples with their tests, results and
audit entries, written with ``bulk_create`` in chunks.

Everything is invented and lives in a scope of its own: user names, the product code, lot
codes and sample labels start with a random prefix, so a run never collides with rows already
in the database. The caller seeds inside a transaction it rolls back (the audit table refuses
deletes on PostgreSQL, so a rollback is the only clean way to take audit entries away again).

The history: samples registered one after another over two years, ten to a lot, each received
an hour after registration with three tests (AV, PV, IV) of two replicates. The newest
``open_share`` of the samples are still in testing, their tests cycling through pending,
assigned, result entered and sent back; every older sample is released, its tests accepted.
The audit trail holds what the services would have written for that history, chained from the
current head (sequence and hash) exactly as ``audit_append`` chains it.
"""
from __future__ import annotations

import datetime as dt
import math
import random
import secrets
from collections.abc import Callable
from dataclasses import dataclass, field
from decimal import Decimal

from django.contrib.auth import get_user_model
from django.contrib.auth.models import Group
from django.db import connection
from django.utils import timezone

from analyses.audit import canonical_content, chain_hash
from analyses.models import (
    AuditAction,
    AuditChainHead,
    AuditEntry,
    Lot,
    LotOrigin,
    LotState,
    Priority,
    Product,
    Result,
    ResultStatus,
    Sample,
    SampleState,
    Specification,
    SpecificationLine,
    SpecificationStatus,
    Test,
    TestState,
)
from analyses.roles import ANALYST, LAB_MANAGER, QA_REVIEWER

SAMPLES_PER_LOT = 10
CHUNK_SAMPLES = 2000  # a multiple of SAMPLES_PER_LOT, so each chunk starts a new lot
BATCH_ROWS = 1000  # rows per INSERT
HISTORY = dt.timedelta(days=730)
SEED = 20261202

# method, unit, maximum, typical value range (invented, inside the limits)
METHODS = (
    ("av", "mg KOH/g", "0.6", (0.05, 0.5)),
    ("pv", "meq O2/kg", "10", (0.5, 8.0)),
    ("iv", "g I2/100 g", "", (120.0, 139.0)),
)
# open tests cycle through these states, so every queue has rows even in a tiny seed
VALUE_RANGES = {code: values for code, _, _, values in METHODS}
OPEN_CYCLE = (TestState.PENDING, TestState.ASSIGNED, TestState.RESULT_ENTERED, TestState.SENT_BACK)
ENTERED_STATES = (TestState.RESULT_ENTERED, TestState.ACCEPTED, TestState.SENT_BACK)
SAMPLE_FIELDS = ("lot", "label", "kind", "state", "taken_at")
RECEIPT_FIELDS = ("received_by", "received_at", "condition_on_receipt", "storage_place", "specification")
TEST_FIELDS = ("sample", "specification_line", "method_code", "replicates", "priority", "due_on", "state", "retest_of")
RESULT_FIELDS = ("test", "replicate", "version", "status", "inputs", "value", "value_exact", "reported", "unit",
                 "method_code", "method_version", "verdict")
LOT_FIELDS = ("code", "product", "origin", "state")

Progress = Callable[[int, int], None]


@dataclass
class SeedScope:
    """What a seed made: its prefix, its users by role, and ids to pick request targets from."""

    prefix: str
    users: dict[str, object]
    samples: int
    open_samples: int
    sample_ids: list[int] = field(default_factory=list)
    lot_ids: list[int] = field(default_factory=list)
    tests_with_results: list[int] = field(default_factory=list)
    rows: dict[str, int] = field(default_factory=dict)


class _Chain:
    """Audit entries chained on from the head, exactly as ``audit_append`` computes them."""

    def __init__(self, sequence: int, previous_hash: str):
        self.sequence, self.previous_hash = sequence, previous_hash
        self.pending: list[AuditEntry] = []
        self.written = 0

    def append(self, actor, action: str, object_type: str, object_id: int, changes: dict, at: dt.datetime,
               *, lot_ref: int, sample_ref: int | None = None, reason: str = "") -> None:
        self.sequence += 1
        fields = {
            "sequence": self.sequence, "at": at, "actor_id": actor.pk, "actor_username": actor.username,
            "action": action, "object_type": object_type, "object_id": str(object_id), "changes": changes,
            "reason": reason, "lot_ref": lot_ref, "sample_ref": sample_ref,
        }
        entry_hash = chain_hash(self.previous_hash, canonical_content(**fields))
        self.pending.append(AuditEntry(previous_hash=self.previous_hash, entry_hash=entry_hash, **fields))
        self.previous_hash = entry_hash

    def flush(self) -> None:
        AuditEntry.objects.bulk_create(self.pending, batch_size=BATCH_ROWS)
        self.written += len(self.pending)
        self.pending = []


def _plain(value):
    """A field's value as the audit trail stores it (DjangoJSONEncoder's forms), without a JSON
    round trip per entry: the seed writes hundreds of thousands."""
    if isinstance(value, dt.datetime):
        text = value.isoformat(timespec="milliseconds")
        return text.removesuffix("+00:00") + "Z" if text.endswith("+00:00") else text
    if isinstance(value, dt.date):
        return value.isoformat()
    if isinstance(value, Decimal):
        return str(value)
    return value


def created(obj, fields: tuple[str, ...]) -> dict[str, list]:
    """{field: [None, value]} for a new object, as ``analyses.audit.created`` writes it."""
    return {name: [None, _plain(getattr(obj, obj._meta.get_field(name).attname))] for name in fields}


def _users(prefix: str) -> dict[str, object]:
    model = get_user_model()
    groups = {group.name: group for group in Group.objects.filter(name__in=(LAB_MANAGER, ANALYST, QA_REVIEWER))}
    users = {}
    for key, role in (("manager", LAB_MANAGER), ("analyst1", ANALYST), ("analyst2", ANALYST), ("qa", QA_REVIEWER)):
        user = model(username=f"{prefix}-{key}", email=f"{prefix}-{key}@example.invalid")
        user.set_unusable_password()
        user.save()
        user.groups.add(groups[role])
        users[key] = user
    return users


def _specification(prefix: str, manager, qa, now: dt.datetime) -> tuple[Product, Specification, list[SpecificationLine]]:
    product = Product.objects.create(
        code=f"{prefix}-RSO", name="Benchmark refined soybean oil (invented)", oil_type="soybean",
        created_by=manager, created_at=now - HISTORY - dt.timedelta(days=30),
    )
    specification = Specification.objects.create(
        product=product, version=1, status=SpecificationStatus.DRAFT, effective_from=(now - HISTORY).date(),
        created_by=manager, created_at=now - HISTORY - dt.timedelta(days=30),
    )
    lines = [
        SpecificationLine.objects.create(
            specification=specification, position=position, method_code=code, unit=unit, maximum=maximum,
            minimum="" if maximum else "120",
        )
        for position, (code, unit, maximum, _) in enumerate(METHODS)
    ]
    # approved once its lines are in (an approved specification's lines never change)
    Specification.objects.filter(pk=specification.pk).update(
        status=SpecificationStatus.APPROVED, approved_by=qa, approved_at=now - HISTORY - dt.timedelta(days=29)
    )
    specification.refresh_from_db()
    return product, specification, lines


def _value(rng: random.Random, low: float, high: float) -> tuple[float, str, str]:
    exact = Decimal(str(round(rng.uniform(low, high), 4)))
    return float(exact), str(exact), str(exact.quantize(Decimal("0.01")))


def open_sample_count(samples: int, open_share: float) -> int:
    """The newest samples still in testing: the share asked for, at least one lot's worth
    (so every queue has rows), never more than all."""
    return min(samples, max(math.ceil(samples * open_share), min(SAMPLES_PER_LOT, samples)))


def list_seed(samples: int, *, open_share: float = 0.05, progress: Progress | None = None, seed: int = SEED) -> SeedScope:
    """Write ``samples`` samples with their lots, tests, results and audit entries; must run
    inside the caller's transaction (it holds the audit chain's head lock until that ends)."""
    if not connection.in_atomic_block:
        raise RuntimeError("list_seed must run inside transaction.atomic(); the caller rolls it back")
    rng = random.Random(seed)
    prefix = f"LB{secrets.token_hex(3).upper()}"
    now = timezone.now()
    users = _users(prefix)
    manager, qa = users["manager"], users["qa"]
    analysts = (users["analyst1"], users["analyst2"])
    product, specification, lines = _specification(prefix, manager, qa, now)
    head, _ = AuditChainHead.objects.select_for_update().get_or_create(id=1)
    chain = _Chain(head.last_sequence, head.last_hash)

    opened = open_sample_count(samples, open_share)
    first_open = samples - opened
    step = HISTORY / max(samples, 1)
    newest = now - dt.timedelta(hours=2)
    scope = SeedScope(prefix=prefix, users=users, samples=samples, open_samples=opened)
    counts = {"lots": 0, "samples": 0, "tests": 0, "results": 0}
    open_test_number = 0

    for start in range(0, samples, CHUNK_SAMPLES):
        end = min(start + CHUNK_SAMPLES, samples)
        registered = [newest - step * (samples - 1 - i) for i in range(start, end)]

        lot_numbers = sorted({i // SAMPLES_PER_LOT for i in range(start, end)})
        lots = []
        for number in lot_numbers:
            last_sample = min((number + 1) * SAMPLES_PER_LOT, samples) - 1
            released = last_sample < first_open
            first_registered = registered[number * SAMPLES_PER_LOT - start]
            lots.append(Lot(
                code=f"{prefix}-L{number:06d}", product=product, origin=LotOrigin.PRODUCTION,
                state=LotState.RELEASED if released else LotState.OPEN,
                decided_by=qa if released else None,
                decided_at=newest - step * (samples - 1 - last_sample) + dt.timedelta(days=4) if released else None,
                created_by=manager, created_at=first_registered - dt.timedelta(hours=1),
            ))
        Lot.objects.bulk_create(lots, batch_size=BATCH_ROWS)
        lot_by_number = dict(zip(lot_numbers, lots))

        sample_rows = []
        for offset, i in enumerate(range(start, end)):
            is_open = i >= first_open
            sample_rows.append(Sample(
                lot=lot_by_number[i // SAMPLES_PER_LOT], label=f"{prefix}-S{i:07d}",
                state=SampleState.IN_TESTING if is_open else SampleState.RELEASED,
                specification=specification, registered_by=manager, registered_at=registered[offset],
                taken_at=registered[offset] - dt.timedelta(hours=3), received_by=manager,
                received_at=registered[offset] + dt.timedelta(hours=1), condition_on_receipt="sealed, clear",
                storage_place="store B",
            ))
        Sample.objects.bulk_create(sample_rows, batch_size=BATCH_ROWS)

        test_rows = []
        for index, sample in zip(range(start, end), sample_rows):
            is_open = index >= first_open
            received = sample.received_at
            for line in lines:
                if is_open:
                    state = OPEN_CYCLE[open_test_number % len(OPEN_CYCLE)]
                    assignee = None if state == TestState.PENDING else analysts[(open_test_number // len(OPEN_CYCLE)) % 2]
                    open_test_number += 1
                else:
                    state, assignee = TestState.ACCEPTED, analysts[rng.randrange(2)]
                test = Test(
                    sample=sample, specification_line=line, method_code=line.method_code, replicates=2,
                    priority=rng.choices(list(Priority.values), weights=(1, 2, 10, 2))[0],
                    due_on=(received + dt.timedelta(days=3)).date(), state=state, assignee=assignee,
                    assigned_at=received + dt.timedelta(hours=2) if assignee else None, created_at=received,
                )
                if state in (TestState.RESULT_ENTERED, TestState.ACCEPTED):
                    test.value, test.value_exact, test.reported = _value(rng, *VALUE_RANGES[line.method_code])
                    test.unit, test.verdict = line.unit, "pass"
                if state == TestState.ACCEPTED:
                    test.reviewed_by = analysts[1] if assignee is analysts[0] else analysts[0]
                    test.reviewed_at = received + dt.timedelta(days=1)
                test_rows.append(test)
        Test.objects.bulk_create(test_rows, batch_size=BATCH_ROWS)

        result_rows = []
        for test in test_rows:
            if test.state not in ENTERED_STATES:
                continue
            for replicate in (1, 2):
                value, exact, reported = _value(rng, *VALUE_RANGES[test.method_code])
                result_rows.append(Result(
                    test=test, replicate=replicate, inputs={"sample_mass": "10.02", "titrant_volume": "1.35"},
                    value=value, value_exact=exact, reported=reported, unit=test.specification_line.unit,
                    method_code=test.method_code, method_version="1.0", verdict="pass", entered_by=test.assignee,
                    entered_at=test.assigned_at + dt.timedelta(hours=3),
                    status=ResultStatus.INVALIDATED if test.state == TestState.SENT_BACK else ResultStatus.CURRENT,
                    status_reason="sent back for retest" if test.state == TestState.SENT_BACK else "",
                ))
        Result.objects.bulk_create(result_rows, batch_size=BATCH_ROWS)

        _audit(chain, lots, sample_rows, test_rows, result_rows, manager, qa)
        chain.flush()

        scope.sample_ids += [sample.pk for sample in sample_rows]
        scope.lot_ids += [lot.pk for lot in lots]
        scope.tests_with_results += sorted({result.test_id for result in result_rows})
        counts["lots"] += len(lots)
        counts["samples"] += len(sample_rows)
        counts["tests"] += len(test_rows)
        counts["results"] += len(result_rows)
        if progress:
            progress(end, samples)

    AuditChainHead.objects.filter(id=1).update(last_sequence=chain.sequence, last_hash=chain.previous_hash)
    scope.rows = {**counts, "audit entries": chain.written}
    return scope


def _audit(chain: _Chain, lots, samples, tests, results, manager, qa) -> None:
    """The entries the services write for this history, in the order they would write them."""
    tests_of: dict[int, list[Test]] = {}
    for test in tests:
        tests_of.setdefault(test.sample_id, []).append(test)
    results_of: dict[int, list[Result]] = {}
    for result in results:
        results_of.setdefault(result.test_id, []).append(result)
    lots_by_id = {lot.pk: lot for lot in lots}
    announced: set[int] = set()
    for sample in samples:
        lot = lots_by_id[sample.lot_id]
        if lot.pk not in announced:
            announced.add(lot.pk)
            chain.append(manager, AuditAction.CREATE, "analyses.lot", lot.pk, created(lot, LOT_FIELDS),
                         lot.created_at, lot_ref=lot.pk)
        refs = {"lot_ref": lot.pk, "sample_ref": sample.pk}
        chain.append(manager, AuditAction.CREATE, "analyses.sample", sample.pk, created(sample, SAMPLE_FIELDS),
                     sample.registered_at, **refs)
        chain.append(manager, AuditAction.CHANGE, "analyses.sample", sample.pk, created(sample, RECEIPT_FIELDS),
                     sample.received_at, **refs)
        for test in tests_of[sample.pk]:
            chain.append(manager, AuditAction.CREATE, "analyses.test", test.pk, created(test, TEST_FIELDS),
                         sample.received_at, **refs)
        for test in tests_of[sample.pk]:
            for result in results_of.get(test.pk, ()):
                chain.append(result.entered_by, AuditAction.CREATE, "analyses.result", result.pk,
                             created(result, RESULT_FIELDS), result.entered_at, **refs)
            if test.state == TestState.ACCEPTED:
                chain.append(test.reviewed_by, AuditAction.TRANSITION, "analyses.test", test.pk,
                             {"state": [TestState.RESULT_ENTERED, TestState.ACCEPTED]}, test.reviewed_at, **refs)
        if sample.state == SampleState.RELEASED:
            chain.append(qa, AuditAction.TRANSITION, "analyses.sample", sample.pk,
                         {"state": [SampleState.TESTING_COMPLETE, SampleState.RELEASED]},
                         sample.received_at + dt.timedelta(days=4), **refs)
    for lot in lots:
        if lot.state == LotState.RELEASED:
            chain.append(qa, AuditAction.TRANSITION, "analyses.lot", lot.pk,
                         {"state": [LotState.OPEN, LotState.RELEASED]}, lot.decided_at, lot_ref=lot.pk)


def analyze_tables() -> None:
    """Fresh planner statistics for the seeded tables (PostgreSQL), as autovacuum would gather
    after a load; ANALYZE may run inside the transaction and sees its uncommitted rows."""
    if connection.vendor != "postgresql":
        return
    tables = [model._meta.db_table for model in (Lot, Sample, Test, Result, AuditEntry)]
    with connection.cursor() as cursor:
        cursor.execute(f"ANALYZE {', '.join(tables)}")
