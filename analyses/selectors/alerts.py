"""Reads of alerts."""
from __future__ import annotations

from django.db.models import QuerySet

from analyses.models import Alert


def alert_list() -> QuerySet[Alert]:
    return Alert.objects.select_related("product", "lot", "study", "acknowledged_by")
