"""Reads of import mappings and imported files."""
from __future__ import annotations

from django.db.models import QuerySet

from analyses.models import ImportMapping, ResultImport


def import_mapping_list() -> QuerySet[ImportMapping]:
    return ImportMapping.objects.select_related("created_by").order_by("name")


def result_import_list() -> QuerySet[ResultImport]:
    return ResultImport.objects.select_related("mapping", "imported_by").order_by("-imported_at", "-id")
