"""What every view of the API shares."""
from __future__ import annotations

from collections.abc import Callable
from typing import Any

from django.db.models import QuerySet
from rest_framework import serializers
from rest_framework.generics import ListAPIView
from rest_framework.request import Request
from rest_framework.response import Response

from analyses.api.pagination import PageWithSize, RowsOf
from analyses.api.serializers.rows import RowSerializer
from analyses.selectors.counts import list_count


def validated(serializer_class: type[serializers.Serializer], request: Request) -> dict[str, Any]:
    """The request body checked by ``serializer_class``; a 400 naming each bad field otherwise."""
    serializer = serializer_class(data=request.data)
    serializer.is_valid(raise_exception=True)
    return dict(serializer.validated_data)


class PagedListView(ListAPIView):
    # A list from a selector, filtered by its FilterSet and paged; ``page_size`` up to 200.
    # (A comment, not a docstring: a docstring would become the schema's text for every list.)

    pagination_class = PageWithSize
    # A list whose serializer is a RowSerializer may name here the selector that completes a
    # page of its values() rows (one query for what the rows need beside their columns); the
    # page is then read and rendered as rows, not model instances (see serializers/rows.py).
    rows_loader: Callable[[list[dict[str, Any]]], None] | None = None

    def row_count(self, queryset: QuerySet) -> int:
        # how a list on the row path counts its filtered queryset (only when a page is counted);
        # a view whose selector counts faster overrides it, counting exactly the same rows
        return list_count(queryset)

    def list(self, request: Request, *args, **kwargs) -> Response:
        serializer_class = self.get_serializer_class()
        if self.rows_loader is None or not issubclass(serializer_class, RowSerializer):
            return super().list(request, *args, **kwargs)
        rows = RowsOf(self.filter_queryset(self.get_queryset()), serializer_class.row_lookups(), count=self.row_count)
        page = self.paginate_queryset(rows)
        rows_loader = type(self).rows_loader  # a plain function (or staticmethod), not bound to the view
        if page is None:
            page = list(rows.rows)
            rows_loader(page)
            return Response(self.get_serializer(page, many=True).data)
        rows_loader(page)
        return self.get_paginated_response(self.get_serializer(page, many=True).data)

    @property
    def is_schema_view(self) -> bool:
        """True while drf-spectacular inspects the view (there is no real user then)."""
        return getattr(self, "swagger_fake_view", False)
