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
from collections.abc import Iterable, Mapping
from dataclasses import dataclass
from datetime import UTC, datetime
from typing import Any

from django.core.serializers.json import DjangoJSONEncoder
from django.db import models, transaction
from django.utils import timezone

from analyses.models import AuditAction, AuditChainHead, AuditEntry

GENESIS_HASH = "0" * 64


def json_safe(value: Any) -> Any:
    """``value`` as plain JSON types (Decimal, dates and UUIDs become strings)."""
    return json.loads(json.dumps(value, cls=DjangoJSONEncoder))


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
    """The entry's content as one canonical JSON text (sorted keys, no spaces, UTC time)."""
    body = {
        "sequence": sequence,
        "at": at.astimezone(UTC).isoformat(timespec="microseconds"),
        "actor_id": actor_id,
        "actor_username": actor_username,
        "action": action,
        "object_type": object_type,
        "object_id": str(object_id),
        "changes": changes,
        "reason": reason,
        "lot_ref": lot_ref,
        "sample_ref": sample_ref,
    }
    return json.dumps(body, sort_keys=True, separators=(",", ":"), ensure_ascii=False, allow_nan=False)


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
    values: dict[str, Any] = {}
    for name in fields:
        field = obj._meta.get_field(name)
        values[name] = getattr(obj, field.attname)
    return json_safe(values)


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
    if action not in AuditAction.values:
        raise ValueError(f"unknown audit action {action!r}")
    if not transaction.get_connection().in_atomic_block:
        raise RuntimeError("audit_append must run inside transaction.atomic()")
    head, _ = AuditChainHead.objects.select_for_update().get_or_create(id=1)
    # chain from the head, not from the last row found: after rows were deleted from the
    # end, the next entry still points at the deleted one and the gap shows
    sequence = head.last_sequence + 1
    previous_hash = head.last_hash
    fields = {
        "sequence": sequence,
        "at": timezone.now(),
        "actor_id": getattr(actor, "pk", None),
        "actor_username": getattr(actor, "username", "") or "",
        "action": action,
        "object_type": obj._meta.label_lower,
        "object_id": str(obj.pk),
        "changes": json_safe(dict(changes)),
        "reason": reason or "",
        "lot_ref": lot_ref,
        "sample_ref": sample_ref,
    }
    entry_hash = chain_hash(previous_hash, canonical_content(**fields))
    entry = AuditEntry.objects.create(previous_hash=previous_hash, entry_hash=entry_hash, **fields)
    head.last_sequence, head.last_hash = sequence, entry_hash
    head.save(update_fields=["last_sequence", "last_hash"])
    return entry


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


def parse_head(text: str) -> tuple[int, str]:
    """``"SEQUENCE:HASH"`` as printed by ``audit_verify``; ValueError when it is not one."""
    sequence, _, digest = text.strip().partition(":")
    if not sequence.isdigit() or len(digest) != 64 or any(c not in "0123456789abcdef" for c in digest):
        raise ValueError(f"{text!r} is not SEQUENCE:HASH (a whole number, a colon, 64 lower-case hex digits)")
    return int(sequence), digest


def audit_chain_verify(expect_head: tuple[int, str] | None = None) -> ChainReport:
    """Walk the whole chain in sequence order; report the first entry that does not hold.
    Then compare the last entry with the recorded head (``AuditChainHead``), which catches
    entries removed from the end, and with ``expect_head`` (a head recorded earlier outside
    the database), which must still be in the chain with the same hash."""
    previous_hash = GENESIS_HASH
    expected_sequence = 1
    checked = 0
    last: AuditEntry | None = None
    expected_entry: AuditEntry | None = None
    for entry in AuditEntry.objects.order_by("sequence").iterator(chunk_size=2000):
        problem = ""
        if entry.sequence != expected_sequence:
            problem = f"sequence {entry.sequence} follows {expected_sequence - 1}: an entry is missing"
        elif entry.previous_hash != previous_hash:
            problem = "its previous hash does not match the entry before it"
        elif chain_hash(previous_hash, entry_content(entry)) != entry.entry_hash:
            problem = "its content does not match its hash (changed after it was written)"
        if problem:
            return ChainReport(False, checked, entry.sequence, entry.pk, problem)
        previous_hash = entry.entry_hash
        expected_sequence += 1
        checked += 1
        last = entry
        if expect_head is not None and entry.sequence == expect_head[0]:
            expected_entry = entry
    last_sequence = last.sequence if last else 0
    head = AuditChainHead.objects.filter(id=1).values("last_sequence", "last_hash").first()
    head = head or {"last_sequence": 0, "last_hash": GENESIS_HASH}
    if (head["last_sequence"], head["last_hash"]) != (last_sequence, previous_hash):
        return ChainReport(
            False, checked, last_sequence + 1, None,
            f"the chain ends at entry {last_sequence}, but its head records entry {head['last_sequence']} "
            f"({head['last_hash'][:12]}...): entries were removed from its end, or the head was changed",
            last_sequence, previous_hash,
        )
    if expect_head is not None:
        sequence, digest = expect_head
        if sequence > last_sequence:
            return ChainReport(
                False, checked, last_sequence + 1, None,
                f"the chain ends at entry {last_sequence}, before the expected head {sequence}: entries were removed",
                last_sequence, previous_hash,
            )
        recorded = expected_entry.entry_hash if expected_entry else GENESIS_HASH if sequence == 0 else None
        if recorded != digest:
            return ChainReport(
                False, checked, sequence, expected_entry.pk if expected_entry else None,
                "its hash is not the one recorded for the expected head: the chain was rewritten",
                last_sequence, previous_hash,
            )
    return ChainReport(True, checked, head_sequence=last_sequence, head_hash=previous_hash)
