"""On PostgreSQL the database itself refuses to rewrite the audit trail (migration 0014):
plain SQL UPDATE, DELETE and TRUNCATE of audit entries fail, and the chain head only moves
forward to an entry that exists. Lifting the guard takes ALTER TABLE ... DISABLE TRIGGER,
which the table's owner does knowingly; ``audit_verify`` still finds what was done then."""
from __future__ import annotations

from io import StringIO

import pytest
from django.core.management import CommandError, call_command
from django.db import DatabaseError, transaction

from analyses.audit import GENESIS_HASH, audit_chain_verify
from analyses.models import AuditChainHead, AuditEntry
from analyses.services.audit_anchors import audit_anchor_write
from analyses.services.samples import sample_hold
from tests.analyses.audit_setup import ENTRIES, HEAD
from tests.analyses.lab_setup import lot, product, received_sample, sample, specification, users  # noqa: F401

pytestmark = pytest.mark.services


def _refused(postgres, sql: str, params=()) -> str:
    """Run plain SQL in a savepoint; return the database's refusal."""
    with pytest.raises(DatabaseError) as caught, transaction.atomic(), postgres.cursor() as cursor:
        cursor.execute(sql, params)
    return str(caught.value)


@pytest.mark.django_db(transaction=True)  # committed rows and autocommit, as in a psql session
def test_plain_sql_cannot_update_delete_or_truncate_audit_entries(postgres, received_sample):
    entry = AuditEntry.objects.order_by("sequence")[2]
    before = list(AuditEntry.objects.order_by("sequence").values_list("sequence", "reason", "entry_hash"))
    message = _refused(postgres, f"UPDATE {ENTRIES} SET reason = 'nothing to see' WHERE id = %s", [entry.pk])
    assert "audit entries are append-only: UPDATE on analyses_auditentry refused" in message
    assert "append-only: DELETE" in _refused(postgres, f"DELETE FROM {ENTRIES} WHERE id = %s", [entry.pk])
    assert "append-only: DELETE" in _refused(postgres, f"DELETE FROM {ENTRIES}")
    assert "append-only: TRUNCATE" in _refused(postgres, f"TRUNCATE {ENTRIES} CASCADE")
    assert list(AuditEntry.objects.order_by("sequence").values_list("sequence", "reason", "entry_hash")) == before
    assert audit_chain_verify().ok


def test_the_head_only_moves_forward_to_an_entry_that_exists(postgres, users, received_sample):
    last = AuditEntry.objects.order_by("sequence").last()
    earlier = AuditEntry.objects.order_by("sequence")[1]
    back = f"UPDATE {HEAD} SET last_sequence = %s, last_hash = %s WHERE id = 1"
    assert "only moves forward" in _refused(postgres, back, [earlier.sequence, earlier.entry_hash])
    assert "only moves forward" in _refused(postgres, back, [0, GENESIS_HASH])
    assert "only moves forward" in _refused(postgres, back, [last.sequence, "e" * 64])
    assert "only moves forward" in _refused(postgres, back, [last.sequence + 1, "e" * 64])  # no such entry
    assert "head is kept: DELETE" in _refused(postgres, f"DELETE FROM {HEAD}")
    assert "head is kept: TRUNCATE" in _refused(postgres, f"TRUNCATE {HEAD}")
    # the application's own appends still move it on
    sample_hold(users["qa"], received_sample, reason="seal broken")
    head = AuditChainHead.objects.get(id=1)
    assert head.last_sequence == last.sequence + 1
    assert audit_chain_verify().ok


def test_an_administrator_lifts_the_guard_knowingly_and_verification_still_sees_the_change(postgres, received_sample):
    audit_anchor_write()
    entry = AuditEntry.objects.order_by("sequence")[2]
    with postgres.cursor() as cursor:  # as DEVELOPERS.md, "Lifting the audit guard", describes
        cursor.execute("SET CONSTRAINTS ALL IMMEDIATE")  # ALTER TABLE waits for none of this test's pending checks
        cursor.execute(f"ALTER TABLE {ENTRIES} DISABLE TRIGGER audit_entry_append_only")
        cursor.execute(f"UPDATE {ENTRIES} SET reason = 'nothing to see' WHERE id = %s", [entry.pk])
        cursor.execute(f"ALTER TABLE {ENTRIES} ENABLE TRIGGER audit_entry_append_only")
    with pytest.raises(CommandError, match=f"broken at entry {entry.sequence} .*changed after it was written"):
        call_command("audit_verify", stdout=StringIO())
    assert "append-only" in _refused(postgres, f"DELETE FROM {ENTRIES}")  # back on
