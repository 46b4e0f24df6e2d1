"""Page-numbered lists whose page size the client may choose (up to a bound)."""
from rest_framework.pagination import PageNumberPagination


class PageWithSize(PageNumberPagination):
    page_size_query_param = "page_size"
    max_page_size = 200
