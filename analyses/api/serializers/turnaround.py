"""Turnaround per method (receipt to acceptance)."""
from __future__ import annotations

from rest_framework import serializers


class TurnaroundSerializer(serializers.Serializer):
    method = serializers.CharField()
    count = serializers.IntegerField(help_text="Tests accepted in the period")
    mean_hours = serializers.FloatField(help_text="From the sample's receipt to the test's acceptance")
    median_hours = serializers.FloatField()


class TurnaroundQuerySerializer(serializers.Serializer):
    since = serializers.DateTimeField(required=False, help_text="Tests accepted at or after (ISO 8601)")
    until = serializers.DateTimeField(required=False, help_text="Tests accepted before (ISO 8601)")
