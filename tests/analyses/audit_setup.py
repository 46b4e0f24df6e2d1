"""Tampering with the audit trail as someone with database access might, for the tests."""
from __future__ import annotations

from collections.abc import Iterator
from contextlib import contextmanager

from django.db import connection

from analyses.models import AuditChainHead, AuditEntry

ENTRIES = AuditEntry._meta.db_table
HEAD = AuditChainHead._meta.db_table


@contextmanager
def guard_lifted() -> Iterator[None]:
    """On PostgreSQL, lift the audit guard (migration 0014) as an administrator would, with
    ALTER TABLE ... DISABLE TRIGGER, and restore it after; SQLite has no guard to lift."""
    if connection.vendor != "postgresql":
        yield
        return
    with connection.cursor() as cursor:
        # the test's own inserts leave deferred foreign-key checks pending, which ALTER TABLE refuses
        cursor.execute("SET CONSTRAINTS ALL IMMEDIATE")
        for table in (ENTRIES, HEAD):
            cursor.execute(f"ALTER TABLE {table} DISABLE TRIGGER USER")
    try:
        yield
    finally:
        with connection.cursor() as cursor:
            for table in (ENTRIES, HEAD):
                cursor.execute(f"ALTER TABLE {table} ENABLE TRIGGER USER")
            cursor.execute("SET CONSTRAINTS ALL DEFERRED")


def tamper(sql: str, params: list | tuple = ()) -> None:
    """Run ``sql`` (with {entries} and {head} for the table names) with the guard lifted."""
    with guard_lifted(), connection.cursor() as cursor:
        cursor.execute(sql.format(entries=ENTRIES, head=HEAD), params)


def delete_last(count: int) -> list[AuditEntry]:
    """Remove the last ``count`` entries with raw SQL."""
    doomed = list(AuditEntry.objects.order_by("-sequence")[:count])
    for entry in doomed:
        tamper("DELETE FROM {entries} WHERE id = %s", [entry.pk])
    return doomed


def move_head(sequence: int, digest: str) -> None:
    tamper("UPDATE {head} SET last_sequence = %s, last_hash = %s WHERE id = 1", [sequence, digest])


def rehash_from(sequence: int) -> None:
    """Recompute the link and hash of entry ``sequence`` and every later one, then move the
    head to the new last hash: what someone who knows the algorithm does to hide a rewrite."""
    from analyses.audit import GENESIS_HASH, chain_hash, entry_content

    before = AuditEntry.objects.filter(sequence__lt=sequence).order_by("-sequence").first()
    previous_hash = before.entry_hash if before else GENESIS_HASH
    for entry in AuditEntry.objects.filter(sequence__gte=sequence).order_by("sequence"):
        entry_hash = chain_hash(previous_hash, entry_content(entry))
        tamper("UPDATE {entries} SET previous_hash = %s, entry_hash = %s WHERE id = %s", [previous_hash, entry_hash, entry.pk])
        previous_hash = entry_hash
    last = AuditEntry.objects.order_by("-sequence").first()
    move_head(last.sequence if last else 0, previous_hash)


def renumber(entry_id: int, sequence: int) -> None:
    tamper("UPDATE {entries} SET sequence = %s WHERE id = %s", [sequence, entry_id])
