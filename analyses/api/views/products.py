"""Products (oil grades)."""
from __future__ import annotations

from drf_spectacular.utils import extend_schema, extend_schema_view
from rest_framework import status
from rest_framework.generics import RetrieveAPIView
from rest_framework.permissions import IsAuthenticated
from rest_framework.request import Request
from rest_framework.response import Response

from analyses.api.permissions import requires
from analyses.api.schema import errors
from analyses.api.serializers.products import ProductCreateSerializer, ProductSerializer
from analyses.api.views.common import PagedListView, validated
from analyses.selectors.products import product_list
from analyses.services.products import product_create


@extend_schema_view(get=extend_schema(summary="List products", responses={200: ProductSerializer(many=True), **errors()}))
class ProductListView(PagedListView):
    input_serializer_classes = {"POST": ProductCreateSerializer}
    serializer_class = ProductSerializer
    permission_classes = [IsAuthenticated, requires("add_product", "create products", methods=("POST",))]

    def get_queryset(self):
        return product_list()

    @extend_schema(
        request=ProductCreateSerializer,
        responses={201: ProductSerializer, **errors(400, 403)},
        summary="Create a product (lab manager)",
    )
    def post(self, request: Request) -> Response:
        product = product_create(request.user, **validated(ProductCreateSerializer, request))
        return Response(ProductSerializer(product).data, status=status.HTTP_201_CREATED)


@extend_schema_view(get=extend_schema(summary="One product", responses={200: ProductSerializer, **errors(404)}))
class ProductDetailView(RetrieveAPIView):
    serializer_class = ProductSerializer

    def get_queryset(self):
        return product_list()
