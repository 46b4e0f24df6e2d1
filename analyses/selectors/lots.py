"""Lots: the filtered list and whether one could be released now."""
from __future__ import annotations

from django.db.models import Count, Q, QuerySet

from analyses.errors import NotFound
from analyses.models import Lot


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
