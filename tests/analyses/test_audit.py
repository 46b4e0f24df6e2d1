"""The audit trail: who/when/what/why on every change, append-only, SHA-256 chained, and
checked by ``manage.py audit_verify``; appends stay linear under concurrency on PostgreSQL."""
from __future__ import annotations

import datetime as dt
import math
import threading
from importlib import import_module
from io import StringIO

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from django.contrib import admin
from django.core.management import CommandError, call_command
from django.db import connection, transaction
from django.test import RequestFactory

from analyses.audit import GENESIS_HASH, audit_append, audit_chain_verify, json_safe
from analyses.models import AuditAction, AuditEntry, ImmutableRowError, Priority, Product, TestState
from analyses.services.audit_anchors import audit_anchor_write
from analyses.services.samples import sample_hold
from tests.analyses.audit_setup import delete_last, move_head, tamper
from tests.analyses.lab_setup import lot, product, received_sample, sample, specification, users  # noqa: F401
from tests.conftest import service_missing
from tests.factories import ProductFactory, UserFactory


def _verify() -> str:
    from io import StringIO

    out = StringIO()
    call_command("audit_verify", stdout=out)
    return out.getvalue()


@pytest.mark.django_db
def test_a_transition_records_who_when_what_and_why(users, received_sample):
    sample_hold(users["qa"], received_sample, reason="seal broken on arrival")
    entry = AuditEntry.objects.order_by("sequence").last()
    assert entry.actor == users["qa"] and entry.actor_username == "qa"
    assert entry.action == "transition"
    assert (entry.object_type, entry.object_id) == ("analyses.sample", str(received_sample.pk))
    assert entry.changes == {"state": ["received", "on_hold"], "resume_state": ["", "received"]}
    assert entry.reason == "seal broken on arrival"
    assert entry.at is not None
    assert entry.lot_ref == received_sample.lot_id and entry.sample_ref == received_sample.pk


@pytest.mark.django_db
def test_the_chain_links_each_entry_to_the_one_before(received_sample):
    entries = list(AuditEntry.objects.order_by("sequence"))
    assert entries[0].sequence == 1 and entries[0].previous_hash == GENESIS_HASH
    for before, after in zip(entries, entries[1:], strict=False):
        assert after.sequence == before.sequence + 1
        assert after.previous_hash == before.entry_hash
    assert audit_chain_verify().ok
    assert audit_anchor_write().written
    assert f"{len(entries)} entries verified" in _verify()


@pytest.mark.django_db
def test_entries_cannot_be_changed_or_deleted_through_the_app(received_sample):
    entry = AuditEntry.objects.first()
    entry.reason = "rewritten"
    with pytest.raises(ImmutableRowError):
        entry.save()
    with pytest.raises(ImmutableRowError):
        entry.delete()
    with pytest.raises(ImmutableRowError):
        AuditEntry.objects.filter(pk=entry.pk).update(reason="rewritten")
    with pytest.raises(ImmutableRowError):
        AuditEntry.objects.all().delete()
    assert AuditEntry.objects.get(pk=entry.pk).reason == ""


@pytest.mark.django_db
def test_the_admin_shows_entries_read_only(users):
    request = RequestFactory().get("/admin/")
    request.user = UserFactory(username="root", is_staff=True, is_superuser=True)
    model_admin = admin.site._registry[AuditEntry]
    assert model_admin.has_view_permission(request)
    assert not model_admin.has_add_permission(request)
    assert not model_admin.has_change_permission(request)
    assert not model_admin.has_delete_permission(request)


@pytest.mark.django_db
def test_a_row_changed_behind_the_apps_back_is_found(received_sample):
    target = AuditEntry.objects.order_by("sequence")[3]
    tamper("UPDATE {entries} SET reason = %s WHERE id = %s", ["nothing to see", target.pk])
    with pytest.raises(CommandError) as caught:
        _verify()
    assert f"broken at entry {target.sequence} (id {target.pk})" in str(caught.value)
    assert "changed after it was written" in str(caught.value)
    assert caught.value.returncode == 1


@pytest.mark.django_db
def test_a_deleted_or_relinked_row_is_found(received_sample):
    entries = list(AuditEntry.objects.order_by("sequence"))
    tamper("DELETE FROM {entries} WHERE id = %s", [entries[2].pk])
    report = audit_chain_verify()
    assert (report.ok, report.broken_sequence, report.checked) == (False, entries[3].sequence, 2)
    assert "missing" in report.problem


@pytest.mark.django_db
def test_a_rehashed_row_breaks_the_link_to_the_next(received_sample):
    """Recomputing the hash of a tampered row does not help: the next entry still points at the old hash."""
    entries = list(AuditEntry.objects.order_by("sequence"))
    tamper("UPDATE {entries} SET entry_hash = %s WHERE id = %s", ["f" * 64, entries[1].pk])
    report = audit_chain_verify()
    assert not report.ok and report.broken_sequence == entries[1].sequence


@pytest.mark.django_db(transaction=True)
def test_concurrent_appends_keep_one_linear_chain_on_postgresql():
    if connection.vendor != "postgresql":
        service_missing("needs PostgreSQL: set DATABASE_URL=postgres://...")
    user = UserFactory(username="writer")
    product = ProductFactory(created_by=user)
    threads, per_thread, errors = 6, 15, []
    start = threading.Barrier(threads)

    def append_many(number: int) -> None:
        try:
            start.wait()
            for i in range(per_thread):
                with transaction.atomic():
                    audit_append(user, "change", Product.objects.get(pk=product.pk), {"note": [number, i]})
        except Exception as exc:  # reported below, never swallowed
            errors.append(exc)
        finally:
            connection.close()

    workers = [threading.Thread(target=append_many, args=(n,)) for n in range(threads)]
    for worker in workers:
        worker.start()
    for worker in workers:
        worker.join()
    assert errors == []
    sequences = list(AuditEntry.objects.order_by("sequence").values_list("sequence", flat=True))
    assert sequences == list(range(1, threads * per_thread + 1))
    assert audit_chain_verify().ok


@pytest.mark.django_db
def test_entries_deleted_from_the_end_are_found(received_sample):
    last_kept = AuditEntry.objects.order_by("-sequence")[2]
    doomed = delete_last(2)
    report = audit_chain_verify()
    assert not report.ok
    assert report.broken_sequence == last_kept.sequence + 1 == doomed[-1].sequence
    assert "removed from its end" in report.problem
    with pytest.raises(CommandError, match="removed from its end"):
        _verify()


@pytest.mark.django_db
def test_an_append_after_a_deletion_at_the_end_does_not_hide_it(users, received_sample):
    delete_last(1)
    sample_hold(users["qa"], received_sample, reason="seal broken")  # the next entry links to the deleted one
    report = audit_chain_verify()
    assert not report.ok and "missing" in report.problem


@pytest.mark.django_db
def test_the_head_is_printed_and_checked_against_a_recorded_one(users, received_sample):
    last = AuditEntry.objects.order_by("sequence").last()
    audit_anchor_write()
    printed = _verify()
    assert f"head: {last.sequence}:{last.entry_hash}" in printed
    recorded = f"{last.sequence}:{last.entry_hash}"
    sample_hold(users["qa"], received_sample, reason="seal broken")  # the chain grows past the recorded head
    out = StringIO()
    call_command("audit_verify", "--expect-head", recorded, stdout=out)
    assert "intact" in out.getvalue()
    with pytest.raises(CommandError, match="rewritten"):
        call_command("audit_verify", "--expect-head", f"{last.sequence}:{'a' * 64}", stdout=StringIO())
    # removing entries AND rewriting the head row passes the database's own check, not the recorded head
    delete_last(2)
    survivor = AuditEntry.objects.order_by("sequence").last()
    move_head(survivor.sequence, survivor.entry_hash)
    assert audit_chain_verify().ok
    with pytest.raises(CommandError, match="before the expected head"):
        call_command("audit_verify", "--expect-head", recorded, stdout=StringIO())
    with pytest.raises(CommandError, match="SEQUENCE:HASH"):
        call_command("audit_verify", "--expect-head", "yesterday", stdout=StringIO())


@pytest.mark.django_db
def test_the_migration_gives_an_existing_chain_its_head(received_sample):
    from django.apps import apps

    record_head = import_module("analyses.migrations.0006_audit_chain_head").record_head
    move_head(0, GENESIS_HASH)  # as before the head was kept
    assert not audit_chain_verify().ok
    record_head(apps, None)
    assert audit_chain_verify().ok


class _FloatKind(float):
    """A float subclass, as a library might hand one over."""


_plain_leaves = st.one_of(
    st.none(), st.booleans(), st.integers(), st.floats(allow_nan=True, allow_infinity=True), st.text(max_size=8),
    st.decimals(allow_nan=False, allow_infinity=False), st.datetimes(timezones=st.just(dt.UTC)), st.dates(), st.uuids(),
    st.datetimes(), st.times(), st.timedeltas(),  # naive: the encoder's own text for each
    st.sampled_from([AuditAction.CREATE, TestState.ASSIGNED]),  # str enums: plain strings once stored
    st.sampled_from([Priority.URGENT, Priority.LOW]),  # int enums: plain ints once stored
    st.floats(allow_nan=False).map(_FloatKind),  # a float subclass
    st.floats(min_value=1e-10, max_value=1e-3),  # where orjson writes floats otherwise than json.dumps
)
_values = st.recursive(
    _plain_leaves,
    lambda inner: st.one_of(
        st.lists(inner, max_size=4), st.tuples(inner, inner),
        st.dictionaries(st.text(max_size=4), inner, max_size=4),
        st.dictionaries(st.integers(), inner, max_size=3),  # keys that JSON turns into strings
        st.dictionaries(st.sampled_from([AuditAction.CREATE, TestState.ASSIGNED]), inner, max_size=2),  # str-enum keys
    ),
    max_leaves=12,
)


@given(_values)
@settings(max_examples=300, deadline=None)
def test_json_safe_gives_what_a_json_round_trip_gives(value):
    """json_safe copies plain values without the round trip; the answer must be the round
    trip's, value for value and type for type (compared as JSON text, where NaN equals NaN)."""
    import json

    from django.core.serializers.json import DjangoJSONEncoder

    expected = json.loads(json.dumps(value, cls=DjangoJSONEncoder))
    got = json_safe(value)
    assert json.dumps(got, sort_keys=True) == json.dumps(expected, sort_keys=True)
    assert _types(got) == _types(expected)


@given(st.dictionaries(st.one_of(st.text(max_size=6), st.integers()), _values, max_size=4))
@settings(max_examples=300, deadline=None)
def test_changes_are_encoded_as_json_safe_then_canonical_json_would(changes):
    """changes_encoded takes a short cut for changes that are plain already; whatever the
    changes, it must give json_safe's values with numbers as jsonb keeps them, and
    canonical_json's text of those, or refuse what canonical_json refuses (NaN and the
    infinities)."""
    from analyses.audit import as_jsonb_keeps, canonical_json, changes_encoded

    expected_values = as_jsonb_keeps(json_safe(dict(changes)))
    try:
        expected = (expected_values, canonical_json(expected_values))
    except ValueError:
        with pytest.raises(ValueError):
            changes_encoded(changes)
        return
    values, text = changes_encoded(changes)
    assert text == expected[1]
    assert _types(values) == _types(expected[0])


def test_changes_in_a_mapping_that_is_not_a_dict_take_the_walk():
    from types import MappingProxyType

    from analyses.audit import changes_encoded

    assert changes_encoded(MappingProxyType({"b": [None, (1, 2)], "a": [0, 1]})) == (
        {"b": [None, [1, 2]], "a": [0, 1]}, '{"a":[0,1],"b":[null,[1,2]]}'
    )


@pytest.mark.parametrize("bulk", [True, False])
def test_numbers_the_database_rewrites_are_hashed_as_it_keeps_them(received_sample, bulk):
    """PostgreSQL's jsonb keeps numbers as numeric: no negative zero, no exponent, so -0.0
    comes back 0.0 and 1e+16 comes back the integer 10000000000000000. An entry must be hashed
    as the database keeps it, or audit_verify finds it changed (found by a review of 2026-12-03:
    such entries failed to verify before)."""
    from analyses.audit import PendingEntry, audit_append_many
    from analyses.models import AuditEntry

    awkward = {"zero": [-0.0, 0.0], "big": [1e16, 1.2345678901234567e16], "huge": [1e23, -1e300],
               "small": [1e-7, 2.5e-300], "text": ["1e+16 and -0.0 as words", None]}
    with transaction.atomic():
        [entry] = audit_append_many([PendingEntry(None, AuditAction.CHANGE, received_sample, awkward)], bulk=bulk)
    stored = AuditEntry.objects.get(pk=entry.pk)
    # the numbers as written, not the floats' binary values (1e23 is 10**23 here)
    assert stored.changes == entry.changes == {
        "zero": [0.0, 0.0], "big": [10**16, 12345678901234568], "huge": [10**23, -(10**300)],
        "small": [1e-7, 2.5e-300], "text": ["1e+16 and -0.0 as words", None],
    }
    assert audit_chain_verify().ok


_texts = st.text(max_size=12)  # any Unicode: quotes, backslashes, control characters, emoji


@given(
    sequence=st.integers(min_value=0, max_value=2**63 - 1),
    at=st.datetimes(timezones=st.sampled_from([dt.UTC, dt.timezone(dt.timedelta(hours=-5, minutes=-30))])),
    actor_id=st.one_of(st.none(), st.integers(min_value=1)),
    actor_username=_texts,
    action=st.sampled_from([*AuditAction, "create"]),
    object_type=_texts,
    object_id=st.one_of(_texts, st.integers()),
    changes=st.dictionaries(_texts, _values, max_size=4),
    reason=_texts,
    lot_ref=st.one_of(st.none(), st.integers()),
    sample_ref=st.one_of(st.none(), st.integers()),
)
@settings(max_examples=300, deadline=None)
def test_canonical_content_is_the_sorted_json_of_the_whole_entry(**fields):
    """canonical_content puts the text together from its parts (the changes encoded once, for
    the hash and for the row: issue 12); it must be exactly the plain definition, json.dumps
    of the whole entry with sorted keys, no spaces, UTC time, as the chain was always hashed."""
    import json

    from analyses.audit import canonical_content

    fields["changes"] = json_safe(fields["changes"])
    if any(isinstance(v, float) and not math.isfinite(v) for v in _leaves(fields["changes"])):
        with pytest.raises(ValueError):
            canonical_content(**fields)
        return
    whole = {**fields, "at": fields["at"].astimezone(dt.UTC).isoformat(timespec="microseconds"), "object_id": str(fields["object_id"])}
    expected = json.dumps(whole, sort_keys=True, separators=(",", ":"), ensure_ascii=False, allow_nan=False)
    assert canonical_content(**fields) == expected


def _leaves(value):
    if isinstance(value, dict):
        for item in value.values():
            yield from _leaves(item)
    elif isinstance(value, list):
        for item in value:
            yield from _leaves(item)
    else:
        yield value


def _types(value):
    if isinstance(value, dict):
        return {(type(key), key): _types(item) for key, item in value.items()}
    if isinstance(value, list):
        return [_types(item) for item in value]
    return type(value)


def test_awkward_text_in_a_bulk_append_is_stored_as_hashed(received_sample):
    """Tabs, newlines, quotes, backslashes and non-ASCII text go through COPY (values_copy):
    what the database keeps must read back as the same values, and the chain must verify."""
    from analyses.audit import PendingEntry, audit_append_many
    from analyses.models import AuditEntry

    awkward = {"note": [None, 'tab\\there "quoted" back\\\\slash\nnew line, µ ± ß, 😀'], "n": [1, 2.5e-7], "nested": [{}, {"k": [True, None]}]}
    with transaction.atomic():
        [entry] = audit_append_many([PendingEntry(None, AuditAction.CHANGE, received_sample, awkward, reason="ünïcode")])
    stored = AuditEntry.objects.get(pk=entry.pk)
    assert stored.changes == awkward == entry.changes and stored.reason == "ünïcode"
    assert audit_chain_verify().ok


def test_a_bulk_append_that_wants_no_entries_back_writes_the_same_chain(received_sample):
    """``entries_back=False`` (result entry's batches) skips building the saved entries; the
    rows written, their sequence, hashes and head are those of an append that returns them."""
    from analyses.audit import PendingEntry, audit_append_many
    from analyses.models import AuditChainHead, AuditEntry

    first_sequence = AuditChainHead.objects.get(id=1).last_sequence + 1
    pending = [PendingEntry(None, AuditAction.CHANGE, received_sample, {"storage_place": ["", f"shelf {n}"]}) for n in range(3)]
    with transaction.atomic():
        assert audit_append_many(pending, entries_back=False) == []
    stored = list(AuditEntry.objects.filter(sequence__gte=first_sequence).order_by("sequence"))
    assert [e.sequence for e in stored] == [first_sequence, first_sequence + 1, first_sequence + 2]
    assert [e.changes for e in stored] == [p.changes for p in pending]
    assert [e.pk for e in stored] == sorted(e.pk for e in stored)  # ids in the order of the entries
    head = AuditChainHead.objects.get(id=1)
    assert (head.last_sequence, head.last_hash) == (stored[-1].sequence, stored[-1].entry_hash)
    assert audit_chain_verify().ok


@pytest.mark.parametrize("number", [2**63 - 1, 2**63, 2**64, 2**70, -(2**70), 10**18, 10**40])
def test_integers_of_any_size_are_encoded_and_read_back_as_the_integers_they_are(number):
    """changes_encoded reads its text back to check it: an integer past 64 bits (which a faster
    parser would read as a float equal to it) stays that integer, as stored and as hashed."""
    from analyses.audit import canonical_json, changes_encoded

    plain, text = changes_encoded({"count": [None, number], "note": [None, "n"]})
    assert plain == {"count": [None, number], "note": [None, "n"]}
    assert type(plain["count"][1]) is int
    assert text == canonical_json({"count": [None, number], "note": [None, "n"]})


@pytest.mark.parametrize(
    "number",
    [
        1e-4, 9.99e-5, 2.5e-5, 1e-5, -3.074e-5, 1e-6, 9.999999999999999e-06, 1.5e-9, 1e-10, 2.5e-300,
        1e15, 1e16, -0.0, -0.01, -0.05, 0.1 + 0.2, 5e-324,
    ],
)
def test_floats_are_written_as_python_writes_them_whatever_their_exponent(number):
    """changes_encoded writes plain changes with orjson, which writes a float from 1e-5 to 1e-4
    without an exponent ("0.000025" where json.dumps writes "2.5e-05"; found by a review) and
    from 1e-9 to 1e-5 with a one-digit one ("1e-6" for "1e-06"): the text hashed must be
    json.dumps's, as audit_verify makes it. Numbers only here, so that no word in a string sends
    the changes the slow way whatever the number."""
    from analyses.audit import as_jsonb_keeps, canonical_json, changes_encoded

    changes = {"value": [None, number], "values": [[number, 1.5], None]}
    expected = as_jsonb_keeps(changes)
    assert changes_encoded(changes) == (expected, canonical_json(expected))


def test_a_float_written_otherwise_in_a_string_only_costs_the_slow_way():
    from analyses.audit import canonical_json, changes_encoded

    changes = {"note": [None, "1e-6, 0.00001, -0.0 and 1e+16 as words"], "value": [None, 1.5]}
    assert changes_encoded(changes) == (changes, canonical_json(changes))


@pytest.mark.django_db
def test_an_entry_with_a_float_orjson_writes_otherwise_verifies(received_sample):
    """The chain verifies with such a float in an entry, appended one at a time and in bulk
    (found by a review: 2.5e-05 was hashed as orjson's "0.000025", and the stored row then
    gave json.dumps's "2.5e-05", so the entry no longer matched its hash)."""
    from analyses.audit import PendingEntry, audit_append_many

    with transaction.atomic():
        audit_append(None, AuditAction.CHANGE, received_sample, {"value": [0, 2.5e-5]})
        audit_append_many([PendingEntry(None, AuditAction.CHANGE, received_sample, {"value": [2.5e-5, 1e-6]})], entries_back=False)
    assert audit_chain_verify().ok


@pytest.mark.django_db
@pytest.mark.parametrize("refused", ["NaN in its changes", "an unknown action"])
def test_an_entry_refused_half_way_through_a_bulk_append_leaves_nothing_written(received_sample, refused):
    """A bulk append that gives no entries back sends each entry to PostgreSQL's COPY as it is
    hashed (audit._entries_stream), so more than a buffer's worth has gone when an entry is
    refused: nothing may be written, the head stays where it was, and the transaction goes on
    (on SQLite the entries are all checked and hashed before any is written)."""
    from analyses.audit import PendingEntry, audit_append_many
    from analyses.models import AuditChainHead

    note = "x" * 400  # 300 entries of this size are several of psycopg's 32 KiB COPY buffers
    entries = [PendingEntry(None, AuditAction.CHANGE, received_sample, {"note": [None, note], "n": [0, n]}) for n in range(300)]
    bad = (
        PendingEntry(None, AuditAction.CHANGE, received_sample, {"value": [0, math.nan]}) if refused == "NaN in its changes"
        else PendingEntry(None, "renamed", received_sample, {"value": [0, 1]})
    )
    entries.insert(250, bad)
    head = AuditChainHead.objects.get(id=1)
    kept = AuditEntry.objects.count()
    with transaction.atomic():
        with pytest.raises(ValueError):
            audit_append_many(iter(entries), entries_back=False)  # a generator may give them
        assert AuditEntry.objects.count() == kept
        assert AuditChainHead.objects.values_list("last_sequence", "last_hash").get(id=1) == (head.last_sequence, head.last_hash)
        audit_append_many(entries[:3], entries_back=False)  # the transaction is still usable
    assert AuditEntry.objects.count() == kept + 3
    assert audit_chain_verify().ok


def test_without_its_savepoint_a_refused_stream_leaves_the_callers_block_to_roll_back(postgres, received_sample):
    """``savepoint=False`` (result entry's batches): the COPY runs in the caller's block without
    a savepoint, so the same refusal leaves that block to roll back (it is marked for rollback,
    where the COPY's own savepoint would have kept it usable); nothing is written and the head
    stays."""
    from django.test.utils import CaptureQueriesContext

    from analyses.audit import PendingEntry, audit_append_many
    from analyses.models import AuditChainHead

    entries = [PendingEntry(None, AuditAction.CHANGE, received_sample, {"n": [0, n]}) for n in range(50)]
    entries.insert(40, PendingEntry(None, AuditAction.CHANGE, received_sample, {"value": [0, math.nan]}))
    head = AuditChainHead.objects.values_list("last_sequence", "last_hash").get(id=1)
    kept = AuditEntry.objects.count()
    for savepoint in (True, False):
        with pytest.raises(ValueError), transaction.atomic():
            with CaptureQueriesContext(postgres) as captured:
                try:
                    audit_append_many(iter(entries), entries_back=False, savepoint=savepoint)
                finally:
                    marked = postgres.needs_rollback
        assert marked is not savepoint
        assert any("SAVEPOINT" in q["sql"] for q in captured.captured_queries) is savepoint
        assert AuditEntry.objects.count() == kept
        assert AuditChainHead.objects.values_list("last_sequence", "last_hash").get(id=1) == head
    with transaction.atomic():
        audit_append_many(entries[:3], entries_back=False, savepoint=False)
    assert AuditEntry.objects.count() == kept + 3
    assert audit_chain_verify().ok


@pytest.mark.django_db
def test_the_head_is_locked_read_and_moved_in_one_statement_each_and_made_when_missing(received_sample):
    """An append reads the head with its lock and moves it to the new last entry; on PostgreSQL
    each is one plain statement. With no head row yet (removed here as an administrator might,
    the guard lifted) the first append makes it, and the chain still verifies."""
    from django.test.utils import CaptureQueriesContext

    from analyses.audit import PendingEntry, audit_append_many
    from analyses.models import AuditChainHead

    before = AuditChainHead.objects.values_list("last_sequence", "last_hash").get(id=1)
    entries = [PendingEntry(None, AuditAction.CHANGE, received_sample, {"n": [0, n]}) for n in range(3)]
    with CaptureQueriesContext(connection) as captured, transaction.atomic():
        appended = audit_append_many(entries)
    statements = [q["sql"] for q in captured.captured_queries if "SAVEPOINT" not in q["sql"]]
    assert appended[0].sequence == before[0] + 1 and appended[0].previous_hash == before[1]
    assert AuditChainHead.objects.values_list("last_sequence", "last_hash").get(id=1) == (
        appended[-1].sequence, appended[-1].entry_hash
    )
    if connection.vendor == "postgresql":
        assert statements[0].startswith("SELECT") and statements[0].endswith("FOR UPDATE")
        assert statements[-1].startswith("UPDATE") and "analyses_auditchainhead" in statements[-1]
        assert len(statements) == 3  # the lock, the ids for the COPY of the entries, the move
    assert audit_chain_verify().ok

    # a head row gone between its lock and its move (it cannot, while locked): refused, as save() refused it
    from django.db import DatabaseError

    from analyses.audit import _head_move

    tamper("DELETE FROM {head}")
    with pytest.raises(DatabaseError, match="head was not moved"), transaction.atomic():
        _head_move(appended[-1].sequence + 1, "0" * 64)
    # a database with no chain yet (emptied here, the guard lifted): the first append makes the head
    tamper("DELETE FROM {entries}")
    tamper("DELETE FROM {head}")
    assert not AuditChainHead.objects.exists()
    with transaction.atomic():
        [made] = audit_append_many([PendingEntry(None, AuditAction.CHANGE, received_sample, {"n": [0, 9]})])
    assert (made.sequence, made.previous_hash) == (1, GENESIS_HASH)
    assert AuditChainHead.objects.values_list("last_sequence", "last_hash").get(id=1) == (1, made.entry_hash)
    assert audit_chain_verify().ok


@pytest.mark.django_db
def test_a_snapshot_gives_each_field_json_safe_and_foreign_keys_by_id(received_sample):
    from decimal import Decimal

    from django.core.exceptions import FieldDoesNotExist

    from analyses.audit import created, snapshot
    from tests.factories import TestFactory

    test = TestFactory(sample=received_sample)
    test.value_exact, test.value = Decimal("0.3506"), 0.3506
    for _ in range(2):  # the second time from the attnames looked up the first
        assert snapshot(test, ["sample", "specification_line", "value_exact", "value", "due_on"]) == {
            "sample": received_sample.pk, "specification_line": test.specification_line_id, "value_exact": "0.3506",
            "value": 0.3506, "due_on": test.due_on.isoformat(),
        }
    assert snapshot(test, (name for name in ("state",))) == {"state": test.state}  # any iterable of names
    assert created(received_sample, ["lot"]) == {"lot": [None, received_sample.lot_id]}
    with pytest.raises(FieldDoesNotExist):
        snapshot(test, ["no_such_field"])
