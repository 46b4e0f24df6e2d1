"""Appending to, and verifying, the hash-chained audit trail.

Each entry's hash is SHA-256 over ``previous_hash + "\\n" + canonical JSON`` of the entry's
own content (sequence, time, actor, action, object, changes, reason, lot/sample refs). The
first entry's previous hash is 64 zeros. Appends lock the single ``AuditChainHead`` row
(SELECT ... FOR UPDATE), so concurrent writers on PostgreSQL queue up and the chain stays
linear; on SQLite the database's write lock does the same.
"""
from __future__ import annotations

import hashlib
import json
import re
from collections.abc import Iterable, Iterator, Mapping, Sequence
from dataclasses import dataclass
from datetime import UTC, date, datetime, time, timedelta
from decimal import Decimal
from functools import lru_cache
from typing import Any, NamedTuple
from uuid import UUID

import orjson
from django.core.serializers.json import DjangoJSONEncoder
from django.db import DatabaseError, connections, models, router, transaction
from django.utils import timezone

from analyses.models import AuditAction, AuditChainHead, AuditEntry
from analyses.row_writes import rows_insert, values_copy

GENESIS_HASH = "0" * 64
_ACTIONS = frozenset(AuditAction.values)


def json_safe(value: Any) -> Any:
    """``value`` as plain JSON types (Decimal, dates and UUIDs become strings): what
    ``json.loads(json.dumps(value, cls=DjangoJSONEncoder))`` gives. Plain values are copied as
    they are; anything else makes that round trip on its own. The round trip of every value
    was a fifth of appending an audit entry (issue 12)."""
    kind = type(value)
    if kind in _LEAVES or value is None:
        return value
    # a plain leaf is kept without a call of its own: the calls were most of the time
    if kind is dict and all(type(key) is str for key in value):
        return {key: item if type(item) in _LEAVES or item is None else json_safe(item) for key, item in value.items()}
    if kind is list or kind is tuple:
        return [item if type(item) in _LEAVES or item is None else json_safe(item) for item in value]
    # a leaf the round trip turns into a plain one, given here as the round trip gives it: a
    # choice (a str or int enum) is its value; a Decimal or a time is the encoder's text
    if isinstance(value, str):
        return str.__str__(value)
    if isinstance(value, int) and not isinstance(value, bool):
        return int.__int__(value)
    if kind in _ENCODED_AS_TEXT:
        return _ENCODER.default(value)
    return json.loads(json.dumps(value, cls=DjangoJSONEncoder))


# exactly these types; a subclass (an enum) takes the round trip. A float comes back from the
# round trip as itself, NaN and the infinities included (canonical_json refuses those)
_LEAVES = frozenset({str, int, bool, float})
# exactly these types: DjangoJSONEncoder.default gives each as a string (or refuses it, as the
# round trip would: an aware time)
_ENCODED_AS_TEXT = frozenset({Decimal, datetime, date, time, timedelta, UUID})
_ENCODER = DjangoJSONEncoder()


def canonical_content(
    *,
    sequence: int,
    at: datetime,
    actor_id: int | None,
    actor_username: str,
    action: str,
    object_type: str,
    object_id: str,
    changes: Mapping[str, Any],
    reason: str,
    lot_ref: int | None,
    sample_ref: int | None,
) -> str:
    """The entry's content as one canonical JSON text (sorted keys, no spaces, UTC time):
    ``json.dumps`` of the whole entry with ``sort_keys=True, separators=(",", ":"),
    ensure_ascii=False, allow_nan=False``."""
    return _content_text(
        sequence, _canonical_time(at), actor_id, actor_username, action, object_type, str(object_id),
        canonical_json(changes), reason, lot_ref, sample_ref,
    )


def canonical_json(value: Any) -> str:
    """``value`` (plain JSON types) as canonical JSON text: sorted keys, no spaces."""
    return json.dumps(value, sort_keys=True, separators=(",", ":"), ensure_ascii=False, allow_nan=False)


def changes_encoded(changes: Mapping[str, Any]) -> tuple[dict[str, Any], str]:
    """An entry's changes as plain JSON types and as canonical JSON text, each number as
    PostgreSQL's jsonb keeps it (``as_jsonb_keeps``): what ``json_safe``, then
    ``as_jsonb_keeps``, then ``canonical_json`` give, so that the text hashed is the text
    ``audit_verify`` makes again from the stored row. Changes that are plain already (most
    are: ``created`` and ``snapshot`` give them so) are encoded by orjson and read back to
    check that nothing was lost on the way (a key that was not a string, a tuple, NaN, which
    orjson writes as null); only other changes, or a text that may hold a number written
    otherwise, take the walk. ``json.dumps`` and ``json.loads`` here were a twelfth of a
    batch's work (issue 12). Keys are ordered as str orders them (orjson orders them by their
    UTF-8 bytes, the same order). Not supported (no service uses one): a str subclass that
    orders itself otherwise, and a dict or list subclass that gives other items than it holds
    (orjson writes what it holds, the walk what it gives; the entry still verifies, since the
    text stored is the text hashed)."""
    try:
        raw = orjson.dumps(changes, option=_ORJSON_CANONICAL)
    except orjson.JSONEncodeError:  # a type orjson leaves to the walk (a Decimal, a subclass, an int past 64 bits)
        pass
    else:
        if not _written_otherwise(raw):
            plain = orjson.loads(raw)
            if plain == changes:
                return plain, raw.decode()
    plain = as_jsonb_keeps(json_safe(dict(changes)))
    return plain, canonical_json(plain)


# sorted keys and no spaces, as canonical_json. A subclass of str, int, dict or list (a choice
# such as TestState) is written as the plain value it holds, as json.dumps writes it; what
# orjson would write its own way (a date, a dataclass) is refused
_ORJSON_CANONICAL = orjson.OPT_SORT_KEYS | orjson.OPT_PASSTHROUGH_DATETIME | orjson.OPT_PASSTHROUGH_DATACLASS


def _written_otherwise(raw: bytes) -> bool:
    """Whether orjson's text may hold a float that jsonb rewrites (written "-0.0" or with "e+"),
    or one that orjson writes otherwise than Python: from 1e-5 to 1e-4 without an exponent
    ("0.000025" for "2.5e-05"), and below that down to 1e-9 with a one-digit exponent ("1e-6"
    for "1e-06"). Found by comparing the two over every exponent and a million random floats
    (the first range only by a review: the first comparison looked at one float per exponent).
    A string may hold these too, and then only costs the walk. Plain substring tests first: a
    regular expression over every text was most of the encoding's time."""
    if b"e+" in raw:
        return True
    # a number written "0.0000…", not a string holding it (a titrant's uncertainty is one)
    if b"0.0000" in raw and _SMALL_PLAIN.search(raw):
        return True
    if b"-0.0" in raw and _NEGATIVE_ZERO.search(raw):
        return True
    return b"e-" in raw and _SHORT_EXPONENT.search(raw) is not None


_NEGATIVE_ZERO = re.compile(rb"-0\.0(?!\d)")
_SMALL_PLAIN = re.compile(rb"[\[,:-]0\.0000")
_SHORT_EXPONENT = re.compile(rb"\de-\d(?!\d)")


def as_jsonb_keeps(value: Any) -> Any:
    """``value`` (plain JSON types) with each float as PostgreSQL's jsonb gives it back: jsonb
    keeps numbers as ``numeric``, which has no negative zero (-0.0 comes back 0.0) and prints
    no exponent, so a float Python writes with one (1e+16 and up, all whole numbers) comes
    back an integer. Anything else comes back as written."""
    kind = type(value)
    if kind is float:
        if value == 0:
            return 0.0
        written = repr(value)
        # the number as written, not the float's binary value: 1e+23 comes back 10**23
        return int(Decimal(written)) if "e+" in written else value
    if kind is dict:
        return {key: as_jsonb_keeps(item) for key, item in value.items()}
    if kind is list:
        return [as_jsonb_keeps(item) for item in value]
    return value


def _canonical_time(at: datetime) -> str:
    return at.astimezone(UTC).isoformat(timespec="microseconds")


def _content_text(
    sequence: int, at: str, actor_id: int | None, actor_username: str, action: str, object_type: str, object_id: str,
    changes_json: str, reason: str, lot_ref: int | None, sample_ref: int | None,
) -> str:
    """The canonical text put together from its parts, the changes already as canonical JSON,
    so that a writer that also stores that JSON encodes the changes once. The keys in sorted
    order; each scalar encoded as ``json.dumps`` encodes it inside the whole."""
    encode = _scalar_json
    return (
        f'{{"action":{encode(action)},"actor_id":{encode(actor_id)},"actor_username":{encode(actor_username)},'
        f'"at":{encode(at)},"changes":{changes_json},"lot_ref":{encode(lot_ref)},"object_id":{encode(object_id)},'
        f'"object_type":{encode(object_type)},"reason":{encode(reason)},"sample_ref":{encode(sample_ref)},'
        f'"sequence":{encode(sequence)}}}'
    )


_SCALAR = json.JSONEncoder(ensure_ascii=False, allow_nan=False)


def _scalar_json(value: Any) -> str:
    """One scalar of an entry as ``json.dumps`` writes it inside the whole: a plain str, int or
    None directly (the encoder's general path was a tenth of an append, ten times an entry),
    anything else through the encoder."""
    kind = type(value)
    if kind is str:
        return _encode_text(value)
    if kind is int:
        return int.__repr__(value)
    if value is None:
        return "null"
    return _SCALAR.encode(value)


_encode_text = json.encoder.encode_basestring  # what ensure_ascii=False encodes a str with


def chain_hash(previous_hash: str, content: str) -> str:
    return hashlib.sha256(f"{previous_hash}\n{content}".encode()).hexdigest()


def entry_content(entry: AuditEntry) -> str:
    return canonical_content(
        sequence=entry.sequence,
        at=entry.at,
        actor_id=entry.actor_id,
        actor_username=entry.actor_username,
        action=entry.action,
        object_type=entry.object_type,
        object_id=entry.object_id,
        changes=entry.changes,
        reason=entry.reason,
        lot_ref=entry.lot_ref,
        sample_ref=entry.sample_ref,
    )


def snapshot(obj: models.Model, fields: Iterable[str]) -> dict[str, Any]:
    """The JSON-safe values of ``fields`` (foreign keys by id)."""
    names = tuple(fields)
    return json_safe({name: getattr(obj, attname) for name, attname in zip(names, _attnames(type(obj), names))})


@lru_cache(maxsize=512)
def _attnames(model: type[models.Model], names: tuple[str, ...]) -> tuple[str, ...]:
    """Each field's attname (a foreign key's id), looked up once per model and set of fields:
    an audit entry of a new result names twenty of them (issue 12)."""
    return tuple(model._meta.get_field(name).attname for name in names)


def changes_between(before: Mapping[str, Any], after: Mapping[str, Any]) -> dict[str, list[Any]]:
    """{field: [old, new]} for the fields whose value differs."""
    return {name: [before.get(name), after.get(name)] for name in after if before.get(name) != after.get(name)}


def created(obj: models.Model, fields: Iterable[str]) -> dict[str, list[Any]]:
    return {name: [None, value] for name, value in snapshot(obj, fields).items()}


def audit_append(
    actor,
    action: str,
    obj: models.Model,
    changes: Mapping[str, Any],
    *,
    reason: str = "",
    lot_ref: int | None = None,
    sample_ref: int | None = None,
) -> AuditEntry:
    """Append one entry for ``obj``; must run inside the caller's transaction, so the entry
    and the change it records are committed (or rolled back) together."""
    entry = PendingEntry(actor, action, obj, changes, reason=reason, lot_ref=lot_ref, sample_ref=sample_ref)
    [appended] = audit_append_many([entry], bulk=False)
    return appended


class PendingEntry(NamedTuple):
    """An audit entry to append: what ``audit_append`` takes, for ``audit_append_many``. A
    named tuple (immutable, as the frozen dataclass it was, and made in under half its time: a
    batch of results makes hundreds)."""

    actor: Any
    action: str
    obj: models.Model
    changes: Mapping[str, Any]
    reason: str = ""
    lot_ref: int | None = None
    sample_ref: int | None = None


def audit_append_many(
    entries: Iterable[PendingEntry], *, bulk: bool = True, entries_back: bool = True, savepoint: bool = True
) -> list[AuditEntry]:
    """Append ``entries`` in order under one lock of the chain head: each gets its own
    sequence and its own hash, chained on the one before, and the head is updated once.
    The same chain as ``audit_append`` called for each in turn, in three queries instead of
    three per entry. Must run inside the caller's transaction. The entries as saved, unless
    ``entries_back`` is False (a bulk writer that has no use for them: building them was a
    sixth of a batch's audit append); then an empty list, and on PostgreSQL each entry is
    taken from ``entries``, hashed and sent while the database inserts the ones before
    (``_entries_stream``): ``entries`` may then be a generator that makes each entry as it is
    taken, but must read nothing from the database (the connection is busy with the COPY: a
    query made meanwhile is refused, ``row_writes.QueryDuringCopy``, and nothing is appended).
    The streamed COPY runs in a savepoint of its own, so that the caller's transaction goes on
    after an entry refused half way; ``savepoint=False`` spares its two queries to a caller
    whose own atomic block ends, rolled back, on any error (result entry's batches)."""
    if not transaction.get_connection().in_atomic_block:
        raise RuntimeError("audit_append must run inside transaction.atomic()")
    streamed = bulk and not entries_back and connections[router.db_for_write(AuditEntry)].vendor == "postgresql"
    if not streamed:
        entries = list(entries)
        for pending in entries:
            _check_action(pending)
        if not entries:
            return []
    head_sequence, head_hash = _head_locked()
    # chain from the head, not from the last row found: after rows were deleted from the
    # end, the next entry still points at the deleted one and the gap shows
    chain = _Chain(head_sequence, head_hash, timezone.now())
    appended: list[AuditEntry] = []
    if streamed:
        _entries_stream(chain, entries, savepoint=savepoint)
        if chain.sequence == head_sequence:
            return appended  # there was no entry
    else:
        chained = [chain.next(pending) for pending in entries]
        appended = _entries_write([row for row, _ in chained], [text for _, text in chained], bulk=bulk, entries_back=entries_back)
    _head_move(chain.sequence, chain.previous_hash)
    return appended


def _head_locked() -> tuple[int, str]:
    """The chain head's last sequence and hash, its row locked until the transaction ends
    (made, the first time). On PostgreSQL one plain statement reads it: the ORM's query and
    ``save()`` took a tenth of a request that enters two results (issue 12)."""
    connection = connections[router.db_for_write(AuditChainHead)]
    if connection.vendor == "postgresql":
        with connection.cursor() as cursor:
            cursor.execute(f"SELECT {_HEAD_COLUMNS} FROM {_head_table(connection)} WHERE {_HEAD_ID} = 1 FOR UPDATE")
            row = cursor.fetchone()
        if row is not None:
            return row[0], row[1]
    head, _ = AuditChainHead.objects.select_for_update().get_or_create(id=1)
    return head.last_sequence, head.last_hash


def _head_move(sequence: int, digest: str) -> None:
    """Record entry ``sequence`` with hash ``digest`` as the chain's last, on the row locked by
    ``_head_locked`` (the database's trigger refuses a head moved back, or to no such entry)."""
    connection = connections[router.db_for_write(AuditChainHead)]
    if connection.vendor != "postgresql":
        moved = AuditChainHead.objects.filter(id=1).update(last_sequence=sequence, last_hash=digest)
    else:
        with connection.cursor() as cursor:
            cursor.execute(
                f"UPDATE {_head_table(connection)} SET {_HEAD_SEQUENCE} = %s, {_HEAD_HASH} = %s WHERE {_HEAD_ID} = 1",
                [sequence, digest],
            )
            moved = cursor.rowcount
    if moved != 1:  # as save(update_fields=...) refuses an update that found no row
        raise DatabaseError("the audit chain head was not moved: its row is missing")


def _head_table(connection) -> str:
    return connection.ops.quote_name(AuditChainHead._meta.db_table)


_HEAD_ID, _HEAD_SEQUENCE, _HEAD_HASH = (
    f'"{AuditChainHead._meta.get_field(name).column}"' for name in ("id", "last_sequence", "last_hash")
)
_HEAD_COLUMNS = f"{_HEAD_SEQUENCE}, {_HEAD_HASH}"


def _check_action(pending: PendingEntry) -> None:
    if pending.action not in _ACTIONS:
        raise ValueError(f"unknown audit action {pending.action!r}")


class _Chain:
    """The chain as far as it is built: the last sequence and hash, and the time the entries
    appended together share."""

    def __init__(self, sequence: int, previous_hash: str, at: datetime):
        self.sequence, self.previous_hash = sequence, previous_hash
        self.at, self.at_text = at, _canonical_time(at)

    def next(self, pending: PendingEntry) -> tuple[tuple[Any, ...], str]:
        """``pending`` as the next entry: its values in ``_ENTRY_FIELDS`` order (the changes as
        plain JSON types) and its changes as the canonical JSON text that was hashed."""
        self.sequence += 1
        actor_id = getattr(pending.actor, "pk", None)
        actor_username = getattr(pending.actor, "username", "") or ""
        action, reason = str(pending.action), pending.reason or ""
        object_type, object_id = pending.obj._meta.label_lower, str(pending.obj.pk)
        changes, changes_json = changes_encoded(pending.changes)
        content = _content_text(
            self.sequence, self.at_text, actor_id, actor_username, action, object_type, object_id, changes_json, reason,
            pending.lot_ref, pending.sample_ref,
        )
        entry_hash = chain_hash(self.previous_hash, content)
        row = (
            self.sequence, self.at, actor_id, actor_username, action, object_type, object_id, changes, reason,
            pending.lot_ref, pending.sample_ref, self.previous_hash, entry_hash,
        )
        self.previous_hash = entry_hash
        return row, changes_json


# AuditEntry's fields (the id left out) in the order _entries_write takes their values
_ENTRY_FIELDS = (
    "sequence", "at", "actor_id", "actor_username", "action", "object_type", "object_id", "changes", "reason",
    "lot_ref", "sample_ref", "previous_hash", "entry_hash",
)
_CHANGES = _ENTRY_FIELDS.index("changes")
# from_db takes values in the model's field order, and COPY names no column left out: a field
# added to or moved in AuditEntry must be added or moved here too
if ("id", *_ENTRY_FIELDS) != tuple(f.attname for f in AuditEntry._meta.concrete_fields):
    raise RuntimeError("AuditEntry's fields changed: update analyses.audit._ENTRY_FIELDS to match them, in order")


def _entries_write(
    rows: list[tuple[Any, ...]], changes_json: list[str], *, bulk: bool, entries_back: bool
) -> list[AuditEntry]:
    """Insert the entries, one tuple of values each in ``_ENTRY_FIELDS`` order, with their
    changes as the canonical JSON text that was hashed; the entries as saved (none unless
    ``entries_back``). On PostgreSQL a bulk write streams the values with COPY, the changes as
    that very text: no model object to prepare and no second encoding of the changes (issue 12)."""
    alias = router.db_for_write(AuditEntry)
    if bulk and connections[alias].vendor == "postgresql":
        ids = values_copy(
            AuditEntry, _ENTRY_FIELDS, [_with_changes_text(row, text) for row, text in zip(rows, changes_json)],
        )
        return [AuditEntry.from_db(alias, ("id", *_ENTRY_FIELDS), (pk, *row)) for pk, row in zip(ids, rows)] if entries_back else []
    entries = [AuditEntry(**dict(zip(_ENTRY_FIELDS, row))) for row in rows]
    if bulk:
        rows_insert(entries)
    else:
        for entry in entries:
            entry.save()
    return entries if entries_back else []


def _with_changes_text(row: tuple[Any, ...], changes_json: str) -> tuple[Any, ...]:
    """An entry's values for COPY: its changes as the canonical JSON text that was hashed."""
    return (*row[:_CHANGES], changes_json, *row[_CHANGES + 1:])


def _entries_stream(chain: _Chain, entries: Iterable[PendingEntry], *, savepoint: bool = True) -> None:
    """PostgreSQL: insert ``entries`` with COPY, each taken, encoded and hashed just before it
    is sent, so that the database inserts the first while the later ones are made: waiting for
    the insert of a batch's 350 entries once they were all made was a twentieth of the batch
    (issue 12). In a savepoint of its own unless ``savepoint`` is False: an entry refused half
    way (an unknown action, NaN in its changes) ends the COPY, and the transaction goes on as it
    was (without the savepoint, it is left aborted, for the caller's atomic block to roll back)."""

    def rows() -> Iterator[tuple[Any, ...]]:
        for pending in entries:
            _check_action(pending)
            yield _with_changes_text(*chain.next(pending))

    with transaction.atomic(using=router.db_for_write(AuditEntry), savepoint=savepoint):
        values_copy(AuditEntry, _ENTRY_FIELDS, rows(), ids=False)


@dataclass(frozen=True)
class ChainReport:
    ok: bool
    checked: int
    broken_sequence: int | None = None
    broken_id: int | None = None
    problem: str = ""
    # the last entry verified: record it outside the database to check against later
    head_sequence: int = 0
    head_hash: str = GENESIS_HASH
    # found against a head recorded outside the database, not within the chain: the entries
    # checked link up among themselves, as a rewrite that recomputed the hashes also does
    against_record: bool = False


@dataclass(frozen=True)
class RecordedHead:
    """A head recorded outside the database (an anchor, or ``--expect-head``): entry
    ``sequence`` had hash ``hash`` then, and a chain that only grows still holds it."""

    sequence: int
    hash: str
    label: str  # how messages name it: "the expected head", "the anchor of ... (line 3 of ...)"
    or_else: str = ""  # the other explanation of a mismatch: "or that anchor line was edited"


def parse_head(text: str) -> tuple[int, str]:
    """``"SEQUENCE:HASH"`` as printed by ``audit_verify``; ValueError when it is not one."""
    sequence, _, digest = text.strip().partition(":")
    if not sequence.isdigit() or len(digest) != 64 or any(c not in "0123456789abcdef" for c in digest):
        raise ValueError(f"{text!r} is not SEQUENCE:HASH (a whole number, a colon, 64 lower-case hex digits)")
    return int(sequence), digest


@dataclass(frozen=True)
class _Walk:
    failure: ChainReport | None
    checked: int
    last_sequence: int
    last_hash: str
    seen: dict[int, tuple[str, int]]  # the watched sequences found: sequence -> (entry_hash, id)


def _walk(entries, previous_hash: str, expected_sequence: int, checked: int, watched: set[int]) -> _Walk:
    """Check ``entries`` (in sequence order) link on from ``previous_hash`` at ``expected_sequence``."""
    seen: dict[int, tuple[str, int]] = {}
    last_sequence = expected_sequence - 1
    for entry in entries:
        problem = ""
        if entry.sequence != expected_sequence:
            problem = f"sequence {entry.sequence} follows {expected_sequence - 1}: an entry is missing"
        elif entry.previous_hash != previous_hash:
            problem = "its previous hash does not match the entry before it"
        elif chain_hash(previous_hash, entry_content(entry)) != entry.entry_hash:
            problem = "its content does not match its hash (changed after it was written)"
        if problem:
            failure = ChainReport(False, checked, entry.sequence, entry.pk, problem, last_sequence, previous_hash)
            return _Walk(failure, checked, last_sequence, previous_hash, seen)
        previous_hash = entry.entry_hash
        last_sequence = expected_sequence
        expected_sequence += 1
        checked += 1
        if entry.sequence in watched:
            seen[entry.sequence] = (entry.entry_hash, entry.pk)
    return _Walk(None, checked, last_sequence, previous_hash, seen)


def _head_row() -> tuple[int, str]:
    head = AuditChainHead.objects.filter(id=1).values_list("last_sequence", "last_hash").first()
    return head or (0, GENESIS_HASH)


def _head_mismatch(walk: _Walk, head: tuple[int, str]) -> ChainReport | None:
    if head == (walk.last_sequence, walk.last_hash):
        return None
    return ChainReport(
        False, walk.checked, walk.last_sequence + 1, None,
        f"the chain ends at entry {walk.last_sequence}, but its head records entry {head[0]} "
        f"({head[1][:12]}...): entries were removed from its end, or the head was changed",
        walk.last_sequence, walk.last_hash,
    )


def _against_records(walk: _Walk, records: Sequence[RecordedHead]) -> ChainReport | None:
    """The first record the chain no longer holds: past its end (removed, or an older backup
    restored), or with another hash (rewritten, every later hash recomputed)."""
    beyond = [record for record in records if record.sequence > walk.last_sequence]
    if beyond:
        record = max(beyond, key=lambda r: r.sequence)
        return ChainReport(
            False, walk.checked, walk.last_sequence + 1, None,
            f"the chain ends at entry {walk.last_sequence}, before {record.label} ({record.sequence}:"
            f"{record.hash[:12]}...): entries were removed from its end, or the database was restored from a "
            f"backup older than that record{', ' + record.or_else if record.or_else else ''}",
            walk.last_sequence, walk.last_hash, against_record=True,
        )
    holding: RecordedHead | None = None
    for record in sorted(records, key=lambda r: r.sequence):
        found, entry_id = walk.seen.get(record.sequence, (GENESIS_HASH, None))
        if found != record.hash:
            since = f" (after entry {holding.sequence}, which {holding.label} still vouches for)" if holding else ""
            return ChainReport(
                False, walk.checked, record.sequence, entry_id,
                f"its hash is not the one recorded by {record.label}: the chain was rewritten at or before this "
                f"entry{since}{', ' + record.or_else if record.or_else else ''}",
                walk.last_sequence, walk.last_hash, against_record=True,
            )
        holding = record
    return None


def audit_chain_verify(
    expect_head: tuple[int, str] | None = None, *, recorded: Sequence[RecordedHead] = ()
) -> ChainReport:
    """Walk the whole chain in sequence order; report the first entry that does not hold.
    Then compare the last entry with the recorded head (``AuditChainHead``), which catches
    entries removed from the end, and with heads recorded earlier outside the database
    (``recorded``: the anchors; ``expect_head``), each of which must still be in the chain
    with the same hash: what catches a truncated chain whose head row was moved back too,
    or a rewrite that recomputed every later hash."""
    records = list(recorded)
    if expect_head is not None:  # first, so that it is the one named when an anchor says the same
        records.insert(0, RecordedHead(expect_head[0], expect_head[1], "the expected head", "or it was mistyped"))
    entries = AuditEntry.objects.order_by("sequence").iterator(chunk_size=2000)
    walk = _walk(entries, GENESIS_HASH, 1, 0, {record.sequence for record in records})
    failure = walk.failure or _head_mismatch(walk, _head_row()) or _against_records(walk, records)
    if failure is not None:
        return failure
    return ChainReport(True, walk.checked, head_sequence=walk.last_sequence, head_hash=walk.last_hash)


def audit_chain_extends(record: RecordedHead | None) -> ChainReport:
    """Whether the chain still holds ``record`` and runs on from it, intact, to its head row:
    what must hold before a newer head is recorded beside it. Only the entries after
    ``record`` are walked (entries before it are ``audit_chain_verify``'s business), so
    this stays cheap however long the chain grows. ``checked`` counts the entries walked."""
    head = _head_row()
    # entries appended after the head row was read are left for the next time
    entries = AuditEntry.objects.filter(sequence__lte=head[0]).order_by("sequence")
    if record is None or record.sequence == 0:
        walk = _walk(entries.iterator(chunk_size=2000), GENESIS_HASH, 1, 0, set())
        failure = walk.failure or _head_mismatch(walk, head) or _against_records(walk, [record] if record else [])
        if failure is not None:
            return failure
        return ChainReport(True, walk.checked, head_sequence=walk.last_sequence, head_hash=walk.last_hash)
    anchored = AuditEntry.objects.filter(sequence=record.sequence).first()
    if anchored is None:
        last = AuditEntry.objects.order_by("-sequence").values_list("sequence", "entry_hash").first()
        last = last or (0, GENESIS_HASH)
        if last[0] < record.sequence:
            return _against_records(_Walk(None, 0, last[0], last[1], {}), [record])  # type: ignore[return-value]
        return ChainReport(
            False, 0, record.sequence, None, f"the entry recorded by {record.label} is missing", last[0], last[1]
        )
    if chain_hash(anchored.previous_hash, entry_content(anchored)) != anchored.entry_hash:
        return ChainReport(
            False, 0, record.sequence, anchored.pk, "its content does not match its hash (changed after it was written)",
            head[0], head[1],
        )
    if anchored.entry_hash != record.hash:
        seen = {record.sequence: (anchored.entry_hash, anchored.pk)}
        return _against_records(_Walk(None, 0, head[0], head[1], seen), [record])  # type: ignore[return-value]
    walk = _walk(
        entries.filter(sequence__gt=record.sequence).iterator(chunk_size=2000), record.hash, record.sequence + 1, 0, set()
    )
    failure = walk.failure or _head_mismatch(walk, head)
    if failure is not None:
        return failure
    return ChainReport(True, walk.checked, head_sequence=walk.last_sequence, head_hash=walk.last_hash)
