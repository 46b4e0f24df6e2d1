"""The audit trail: append-only entries chained by SHA-256.

Each entry's ``entry_hash`` is SHA-256 over the previous entry's hash and the entry's own
canonical content (see ``analyses.audit``), so a row changed behind the application's back
breaks the chain at that row. ``AuditChainHead`` is a single row that writers lock
(SELECT ... FOR UPDATE) so that appends are serialised on PostgreSQL; it also records the
last entry, so entries deleted from the end are detected too.
"""
from __future__ import annotations

from django.conf import settings
from django.db import models

from analyses.models.immutable import AppendOnlyModel


class AuditAction(models.TextChoices):
    CREATE = "create", "Created"
    CHANGE = "change", "Changed"
    TRANSITION = "transition", "State transition"


class AuditEntry(AppendOnlyModel):
    sequence = models.PositiveBigIntegerField(unique=True)
    at = models.DateTimeField()
    actor = models.ForeignKey(
        settings.AUTH_USER_MODEL, null=True, blank=True, on_delete=models.PROTECT, related_name="+"
    )
    actor_username = models.CharField(max_length=150, blank=True)
    action = models.CharField(max_length=16, choices=AuditAction.choices)
    object_type = models.CharField(max_length=60)
    object_id = models.CharField(max_length=40)
    changes = models.JSONField(default=dict, help_text='{"field": [old, new]}')
    reason = models.TextField(blank=True)
    lot_ref = models.BigIntegerField(null=True, blank=True, db_index=True)
    sample_ref = models.BigIntegerField(null=True, blank=True, db_index=True)
    previous_hash = models.CharField(max_length=64)
    entry_hash = models.CharField(max_length=64, unique=True)

    class Meta:
        ordering = ["sequence"]
        verbose_name_plural = "audit entries"
        indexes = [models.Index(fields=["object_type", "object_id"], name="audit_object_idx")]
        permissions = [("view_audit_trail", "Can read the audit trail")]

    def __str__(self) -> str:
        return f"#{self.sequence} {self.action} {self.object_type}:{self.object_id}"


class AuditChainHead(models.Model):
    """One row (pk=1) that every append locks, so appends never interleave. It records the
    chain's last entry (sequence and hash), written in the same transaction as the entry:
    entries removed from the end of the chain leave the head pointing past them."""

    id = models.PositiveSmallIntegerField(primary_key=True, default=1)
    last_sequence = models.PositiveBigIntegerField(default=0, help_text="sequence of the last entry; 0: none yet")
    last_hash = models.CharField(max_length=64, default="0" * 64, help_text="entry_hash of the last entry")

    class Meta:
        verbose_name = "audit chain head"
