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
