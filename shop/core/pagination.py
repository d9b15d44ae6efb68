"""Page-number pagination used by every list endpoint."""

from rest_framework.pagination import PageNumberPagination

MAX_PAGE_SIZE = 200


class ShopPagination(PageNumberPagination):
    """Pages of 50 by default; clients may ask for up to MAX_PAGE_SIZE with `page_size`."""

    page_size_query_param = "page_size"
    max_page_size = MAX_PAGE_SIZE
