"""Reads of result corrections after release."""
from __future__ import annotations

from django.db.models import QuerySet

from analyses.models import PostReleaseCorrection


def post_release_correction_list() -> QuerySet[PostReleaseCorrection]:
    """Every correction with what its rows show joined, newest first (a fixed number of queries)."""
    return PostReleaseCorrection.objects.select_related(
        "lot", "result", "proposed_by", "decided_by", "certificate"
    ).order_by("-proposed_at", "-id")
