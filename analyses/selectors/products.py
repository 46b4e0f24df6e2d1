"""Products: the list."""
from __future__ import annotations

from django.db.models import QuerySet

from analyses.models import Product


def product_list() -> QuerySet[Product]:
    return Product.objects.select_related("created_by").order_by("code")
