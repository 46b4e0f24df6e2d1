"""What every view of the API shares."""
from __future__ import annotations

from typing import Any

from rest_framework import serializers
from rest_framework.generics import ListAPIView
from rest_framework.request import Request

from analyses.api.pagination import PageWithSize


def validated(serializer_class: type[serializers.Serializer], request: Request) -> dict[str, Any]:
    """The request body checked by ``serializer_class``; a 400 naming each bad field otherwise."""
    serializer = serializer_class(data=request.data)
    serializer.is_valid(raise_exception=True)
    return dict(serializer.validated_data)


class PagedListView(ListAPIView):
    # A list from a selector, filtered by its FilterSet and paged; ``page_size`` up to 200.
    # (A comment, not a docstring: a docstring would become the schema's text for every list.)

    pagination_class = PageWithSize

    @property
    def is_schema_view(self) -> bool:
        """True while drf-spectacular inspects the view (there is no real user then)."""
        return getattr(self, "swagger_fake_view", False)
