"""Audit trail entries as read by QA and lab managers."""
from __future__ import annotations

from rest_framework import serializers

from analyses.models import AuditEntry


class AuditEntrySerializer(serializers.ModelSerializer):
    actor = serializers.CharField(source="actor_username", read_only=True)

    class Meta:
        model = AuditEntry
        fields = [
            "sequence", "at", "actor", "action", "object_type", "object_id", "changes", "reason",
            "previous_hash", "entry_hash",
        ]
        read_only_fields = fields
