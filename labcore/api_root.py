"""The API root: where to go next."""
from drf_spectacular.utils import extend_schema
from rest_framework.decorators import api_view, permission_classes
from rest_framework.permissions import AllowAny
from rest_framework.response import Response
from rest_framework.reverse import reverse


@extend_schema(exclude=True)
@api_view(["GET"])
@permission_classes([AllowAny])
def api_root(request, format=None):
    return Response(
        {
            "me": reverse("me", request=request, format=format),
            "methods": reverse("method-list", request=request, format=format),
            "calculations": reverse("calculation", request=request, format=format),
            "products": reverse("product-list", request=request, format=format),
            "specifications": reverse("specification-list", request=request, format=format),
            "lots": reverse("lot-list", request=request, format=format),
            "samples": reverse("sample-list", request=request, format=format),
            "tests": reverse("test-list", request=request, format=format),
            "my_tests": reverse("test-my-queue", request=request, format=format),
            "review_queue": reverse("test-review-queue", request=request, format=format),
            "investigations": reverse("investigation-list", request=request, format=format),
            "post_release_corrections": reverse("post-release-correction-list", request=request, format=format),
            "turnaround": reverse("turnaround", request=request, format=format),
            "users": reverse("user-list", request=request, format=format),
            "tokens": reverse("auth-token-list", request=request, format=format),
            "stability_studies": reverse("study-list", request=request, format=format),
            "alerts": reverse("alert-list", request=request, format=format),
            "trend_series": reverse("series-list", request=request, format=format),
            "trend_baselines": reverse("baseline-list", request=request, format=format),
            "reagent_kinds": reverse("reagent-kind-list", request=request, format=format),
            "reagent_lots": reverse("reagent-lot-list", request=request, format=format),
            "instruments": reverse("instrument-list", request=request, format=format),
            "import_mappings": reverse("import-mapping-list", request=request, format=format),
            "imports": reverse("result-import-list", request=request, format=format),
            "schema": reverse("schema", request=request, format=format),
            "docs": reverse("api-docs", request=request, format=format),
        }
    )
