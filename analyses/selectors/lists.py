"""Filtered lists for the API, each loading its related rows in a fixed number of queries
whatever the page size."""
from __future__ import annotations

from django.db.models import Count, Prefetch, Q, QuerySet

from analyses.errors import NotFound
from analyses.models import Investigation, Lot, Product, Result, Sample, Test


def product_list() -> QuerySet[Product]:
    return Product.objects.select_related("created_by").order_by("code")


def lot_list(*, state: str | None = None, product=None, origin: str | None = None, code_contains: str | None = None) -> QuerySet[Lot]:
    """Lots, newest first, with product, decision maker and counts of samples and open investigations."""
    queryset = Lot.objects.select_related("product", "created_by", "decided_by", "hold_notice_by").annotate(
        sample_count=Count("samples", distinct=True),
        open_investigations=Count("investigations", filter=Q(investigations__state="open"), distinct=True),
    )
    if state:
        queryset = queryset.filter(state=state)
    if product is not None:
        queryset = queryset.filter(product=product)
    if origin:
        queryset = queryset.filter(origin=origin)
    if code_contains:
        queryset = queryset.filter(code__icontains=code_contains)
    return queryset.order_by("-created_at", "-id")


def sample_list(
    *, state: str | None = None, lot=None, kind: str | None = None, label_contains: str | None = None
) -> QuerySet[Sample]:
    """Samples, newest first, with lot, product, people, specification and their tests."""
    queryset = Sample.objects.select_related(
        "lot__product", "registered_by", "received_by", "specification"
    ).prefetch_related(Prefetch("tests", queryset=Test.objects.select_related("assignee").order_by("id")))
    if state:
        queryset = queryset.filter(state=state)
    if lot is not None:
        queryset = queryset.filter(lot=lot)
    if kind:
        queryset = queryset.filter(kind=kind)
    if label_contains:
        queryset = queryset.filter(label__icontains=label_contains)
    return queryset.order_by("-registered_at", "-id")


def sample_detail(sample_id: int) -> Sample:
    sample = sample_list().filter(pk=sample_id).first()
    if sample is None:
        raise NotFound(f"sample {sample_id} not found")
    return sample


def result_history(test: Test | int) -> QuerySet[Result]:
    """Every result of a test, superseded and invalidated ones included, by replicate and version."""
    test_id = test.pk if isinstance(test, Test) else test
    return (
        Result.objects.filter(test_id=test_id)
        .select_related("entered_by", "supersedes", "reagent_lot")
        .prefetch_related("instrument_uses__instrument")
        .order_by("replicate", "version", "id")
    )


def investigation_list(*, state: str | None = None, lot=None) -> QuerySet[Investigation]:
    queryset = Investigation.objects.select_related(
        "lot__product", "test__sample", "test__specification_line", "opened_by", "closed_by", "retest"
    )
    if state:
        queryset = queryset.filter(state=state)
    if lot is not None:
        queryset = queryset.filter(lot=lot)
    return queryset.order_by("-opened_at", "-id")


def lot_readiness(lot: Lot | int) -> dict[str, object]:
    """Whether a lot could be released now, and if not, what is missing (as ``lot_release``
    would report it)."""
    from analyses.services.release import release_blockers, release_warnings

    lot_id = lot.pk if isinstance(lot, Lot) else lot
    lot = Lot.objects.filter(pk=lot_id).first()
    if lot is None:
        raise NotFound(f"lot {lot_id} not found")
    missing = release_blockers(lot) if lot.state == "open" else [f"lot {lot.code} is {lot.state}"]
    return {
        "lot": lot.code, "state": lot.state, "releasable": not missing, "missing": missing,
        "warnings": release_warnings(lot),
    }
