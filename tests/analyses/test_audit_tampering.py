"""The tampering cases of the attack run (issue 8), each caught by ``audit_verify`` with a
clear message and exit status 1, without typing ``--expect-head``: the chain is checked
against the anchors that beat wrote outside the database.

On SQLite the database has no guard, so the rows can be tampered with directly; on
PostgreSQL the tests lift the guard first (ALTER TABLE ... DISABLE TRIGGER), as an
administrator with full rights could (tests/analyses/test_audit_guard.py: without that,
the database refuses).
"""
from __future__ import annotations

import json
from io import StringIO

import pytest
from django.core.management import CommandError, call_command

from analyses.audit import GENESIS_HASH, canonical_content, chain_hash
from analyses.models import AuditEntry
from analyses.services.audit_anchors import anchor_path, audit_anchor_write
from analyses.services.samples import sample_hold, sample_resume
from tests.analyses.audit_setup import delete_last, move_head, rehash_from, renumber, tamper
from tests.analyses.lab_setup import lot, product, received_sample, sample, specification, users  # noqa: F401

pytestmark = pytest.mark.django_db


def _verify() -> str:
    out = StringIO()
    call_command("audit_verify", stdout=out)
    return out.getvalue()


def _refused() -> str:
    """The message of a failing ``audit_verify``, which must exit with status 1."""
    with pytest.raises(CommandError) as caught:
        _verify()
    assert caught.value.returncode == 1
    return str(caught.value)


@pytest.fixture
def anchored(users, received_sample) -> list[AuditEntry]:
    """A chain whose head is anchored, and which verifies as intact before anyone tampers."""
    sample_hold(users["qa"], received_sample, reason="seal broken on arrival")
    sample_resume(users["qa"], received_sample, reason="seal checked, intact")
    assert audit_anchor_write().written
    assert "audit chain intact" in _verify()
    return list(AuditEntry.objects.order_by("sequence"))


def _edit(entry: AuditEntry, reason: str) -> None:
    tamper("UPDATE {entries} SET reason = %s WHERE id = %s", [reason, entry.pk])


# 1
def test_last_entries_deleted_and_head_moved_back(anchored):
    delete_last(2)
    survivor = anchored[-3]
    move_head(survivor.sequence, survivor.entry_hash)
    message = _refused()
    assert f"broken at entry {survivor.sequence + 1}" in message
    assert f"the chain ends at entry {survivor.sequence}, before the anchor of" in message
    assert "entries were removed from its end" in message


# 2
def test_an_entry_altered_and_every_later_hash_recomputed(users, received_sample, anchored):
    first_anchor = anchored[-1]
    sample_hold(users["qa"], received_sample, reason="second hold")
    assert audit_anchor_write().written  # a second anchor, after the first
    target = AuditEntry.objects.get(sequence=first_anchor.sequence - 2)
    _edit(target, "nothing to see")
    rehash_from(target.sequence)
    message = _refused()
    # the earliest anchor that no longer matches is named, and where the rewrite lies
    assert f"broken at entry {first_anchor.sequence}" in message
    assert "is not the one recorded by the anchor of" in message
    assert "the chain was rewritten at or before this entry" in message
    assert "entries in the database link up among themselves" in message  # not "intact": they were rehashed


def test_a_rewrite_after_an_anchor_is_placed_after_it(users, received_sample, anchored):
    first_anchor = anchored[-1]
    sample_hold(users["qa"], received_sample, reason="second hold")
    audit_anchor_write()
    last = AuditEntry.objects.order_by("sequence").last()
    _edit(last, "nothing to see")
    rehash_from(last.sequence)
    message = _refused()
    assert f"broken at entry {last.sequence}" in message
    assert f"after entry {first_anchor.sequence}, which the anchor of" in message and "still vouches for" in message


# 3
def test_everything_deleted_and_head_reset(anchored):
    tamper("DELETE FROM {entries}")
    move_head(0, GENESIS_HASH)
    message = _refused()
    assert f"the chain ends at entry 0, before the anchor of" in message
    assert f"({anchored[-1].sequence}:{anchored[-1].entry_hash[:12]}...)" in message


def test_everything_deleted_and_a_new_chain_begun(users, received_sample, anchored):
    tamper("DELETE FROM {entries}")
    move_head(0, GENESIS_HASH)
    for n in range(len(anchored) + 2):  # a new chain, longer than the old one
        sample_hold(users["qa"], received_sample, reason=f"hold {n}")
        sample_resume(users["qa"], received_sample, reason=f"resume {n}")
    assert "the chain was rewritten" in _refused()


# 4
def test_an_entry_altered_in_place(anchored):
    target = anchored[3]
    _edit(target, "nothing to see")
    message = _refused()
    assert f"broken at entry {target.sequence} (id {target.pk})" in message
    assert "its content does not match its hash (changed after it was written)" in message


# 5
def test_an_entry_deleted_in_the_middle(anchored):
    doomed = anchored[3]
    tamper("DELETE FROM {entries} WHERE id = %s", [doomed.pk])
    message = _refused()
    assert f"broken at entry {doomed.sequence + 1}" in message
    assert f"sequence {doomed.sequence + 1} follows {doomed.sequence - 1}: an entry is missing" in message


# 6
def _insert_forged(at: int) -> None:
    """A made-up entry at sequence ``at``, hashed correctly onto the one before it; the later ones move up."""
    for entry in AuditEntry.objects.filter(sequence__gte=at).order_by("-sequence"):
        renumber(entry.pk, entry.sequence + 1)
    before = AuditEntry.objects.get(sequence=at - 1)
    fields = dict(
        sequence=at, at=before.at, actor_id=None, actor_username="", action="change", object_type="analyses.lot",
        object_id=str(before.lot_ref or 1), changes={"note": [None, "forged"]}, reason="", lot_ref=None, sample_ref=None,
    )
    digest = chain_hash(before.entry_hash, canonical_content(**fields))
    tamper(
        "INSERT INTO {entries} (sequence, at, actor_id, actor_username, action, object_type, object_id, changes, reason,"
        " lot_ref, sample_ref, previous_hash, entry_hash) VALUES (%s, %s, NULL, '', 'change', %s, %s, %s, '', NULL, NULL, %s, %s)",
        [at, before.at, fields["object_type"], fields["object_id"], json.dumps(fields["changes"]), before.entry_hash, digest],
    )


def test_an_entry_inserted(anchored):
    at = anchored[3].sequence
    _insert_forged(at)
    message = _refused()
    # the forged entry links on, but the one after it still points at the entry before
    assert f"broken at entry {at + 1}" in message
    assert "its previous hash does not match the entry before it" in message


def test_an_entry_inserted_and_every_later_hash_recomputed(anchored):
    at = anchored[3].sequence
    _insert_forged(at)
    rehash_from(at + 1)
    message = _refused()
    assert f"broken at entry {anchored[-1].sequence}" in message
    assert "the chain was rewritten at or before this entry" in message


# 7
def test_head_row_edited(anchored):
    move_head(anchored[-2].sequence, anchored[-2].entry_hash)
    message = _refused()
    assert f"the chain ends at entry {anchored[-1].sequence}, but its head records entry {anchored[-2].sequence}" in message
    assert "or the head was changed" in message


def test_head_row_given_a_made_up_hash(anchored):
    move_head(anchored[-1].sequence, "e" * 64)
    assert "but its head records entry" in _refused()


# 8
def test_anchor_newer_than_the_chain_after_a_restore_from_an_older_backup(users, received_sample, anchored):
    sample_hold(users["qa"], received_sample, reason="after the backup")
    assert audit_anchor_write().written
    # the database comes back from the backup taken at the first anchor: a consistent, shorter chain
    delete_last(1)
    move_head(anchored[-1].sequence, anchored[-1].entry_hash)
    message = _refused()
    assert f"the chain ends at entry {anchored[-1].sequence}, before the anchor of" in message
    assert "or the database was restored from a backup older than that record" in message


def test_anchor_line_edited_to_an_entry_beyond_the_chain(anchored):
    path = anchor_path()
    record = json.loads(path.read_text())
    record["sequence"] += 5
    path.write_text(json.dumps(record) + "\n")
    message = _refused()
    assert "before the anchor of" in message and "or that anchor line was edited" in message


# 9
def test_anchor_file_deleted(anchored):
    anchor_path().unlink()
    message = _refused()
    assert f"no anchor in {anchor_path()}, but the chain holds {len(anchored)} entries" in message
    assert "the anchor file was deleted, moved or emptied" in message


def test_anchor_file_emptied(anchored):
    anchor_path().write_text("")
    assert "the anchor file was deleted, moved or emptied" in _refused()


def test_anchor_hash_edited(anchored):
    path = anchor_path()
    record = json.loads(path.read_text())
    record["hash"] = "d" * 64
    path.write_text(json.dumps(record) + "\n")
    message = _refused()
    assert f"broken at entry {anchored[-1].sequence}" in message
    assert "the chain was rewritten at or before this entry, or that anchor line was edited" in message


def test_anchor_file_edited_into_something_else(anchored):
    path = anchor_path()
    path.write_text(path.read_text() + "sequence 999, trust me\n")
    message = _refused()
    assert "audit chain not proven" in message
    assert f"line 2 of {path} is not an anchor" in message and "the file was edited" in message


def test_anchor_lines_put_out_of_order(users, received_sample, anchored):
    sample_hold(users["qa"], received_sample, reason="second hold")
    audit_anchor_write()
    path = anchor_path()
    first, second = path.read_text().splitlines()
    path.write_text(f"{second}\n{first}\n")
    message = _refused()
    assert "anchors only move forward, so the file was edited" in message


def test_anchor_line_cut_short(anchored):
    path = anchor_path()
    path.write_text(path.read_text().rstrip("\n"))
    assert "is cut short" in _refused()


# 10
def test_sequences_reordered(anchored):
    first, second = anchored[3], anchored[4]
    renumber(first.pk, 10**9)  # the sequence is unique: swap through a free number
    renumber(second.pk, first.sequence)
    renumber(first.pk, second.sequence)
    message = _refused()
    assert f"broken at entry {first.sequence} (id {second.pk})" in message
    assert "its previous hash does not match the entry before it" in message


def test_an_untouched_chain_verifies_against_its_anchors(users, received_sample, anchored):
    sample_hold(users["qa"], received_sample, reason="after the anchor")
    printed = _verify()
    assert f"audit chain intact: {len(anchored) + 1} entries verified" in printed
    assert f"anchored: entry {anchored[-1].sequence} at" in printed and "1 entries after it not yet anchored" in printed
