"""Page-numbered lists whose page size the client may choose (up to a bound)."""
from collections.abc import Callable

from django.db.models import QuerySet
from rest_framework.pagination import PageNumberPagination

from analyses.selectors.counts import list_count


class PageWithSize(PageNumberPagination):
    page_size_query_param = "page_size"
    max_page_size = 200


class RowsOf:
    """What a list on the row path pages (``PagedListView``): counted on the filtered queryset
    itself, its page read with ``values()``. The count is not taken on the ``values()``
    queryset because Django keeps in a COUNT(*) every join its lookups made (test to sample,
    lot, product, people...), which made counting 300,000 tests several times slower."""

    def __init__(self, queryset, lookups: list[str], count: Callable[[QuerySet], int] = list_count):
        self.queryset = queryset
        self.rows = queryset.prefetch_related(None).values(*lookups)
        self._count = count  # how the list counts its queryset (its view's ``row_count``)

    @property
    def ordered(self) -> bool:  # the paginator warns on an unordered list, as for a queryset
        return self.queryset.ordered

    def count(self) -> int:
        return self._count(self.queryset)

    def __len__(self) -> int:
        return self.count()

    def __getitem__(self, key):
        return self.rows[key]
