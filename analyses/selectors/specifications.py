"""Reading specifications."""
from __future__ import annotations

import datetime as dt

from django.db.models import Prefetch, QuerySet

from analyses.models import Product, Specification, SpecificationLine, SpecificationStatus


def specification_effective(product: Product | int, on: dt.date) -> Specification | None:
    """The approved specification in effect for ``product`` on ``on``: among approved
    versions effective on or before that date, the one effective latest (then the highest
    version)."""
    product_id = product.pk if isinstance(product, Product) else product
    return (
        Specification.objects.filter(
            product_id=product_id, status=SpecificationStatus.APPROVED, effective_from__lte=on
        )
        .order_by("-effective_from", "-version")
        .first()
    )


def specification_list(
    *, product: Product | int | None = None, status: str | None = None
) -> QuerySet[Specification]:
    """Specifications with product, people and lines loaded (a fixed number of queries)."""
    queryset = Specification.objects.select_related("product", "created_by", "approved_by", "revised_from").prefetch_related(
        Prefetch("lines", queryset=SpecificationLine.objects.order_by("position", "id"))
    )
    if product is not None:
        queryset = queryset.filter(product_id=product.pk if isinstance(product, Product) else product)
    if status:
        queryset = queryset.filter(status=status)
    return queryset.order_by("product__code", "-version")
