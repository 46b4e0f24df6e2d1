"""Helpers for the API tests."""
from __future__ import annotations

from analyses.models import (
    AuditEntry,
    Certificate,
    Investigation,
    Lot,
    Product,
    Result,
    Sample,
    Specification,
    SpecificationLine,
    Test,
)

WRITTEN_MODELS = (Product, Specification, SpecificationLine, Lot, Sample, Test, Result, Investigation, Certificate, AuditEntry)


def row_counts() -> dict[str, int]:
    """Rows of every domain table; every change the services make also appends an audit
    entry, so equal counts mean nothing was written."""
    return {model.__name__: model.objects.count() for model in WRITTEN_MODELS}
