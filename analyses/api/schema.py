"""Pieces of the OpenAPI description shared by the views: the error bodies and the
Idempotency-Key header."""
from __future__ import annotations

from drf_spectacular.types import OpenApiTypes
from drf_spectacular.utils import OpenApiParameter, OpenApiResponse
from rest_framework import serializers


class InvalidInputErrorSerializer(serializers.Serializer):
    """400: every offending field named, nested ones with dots (``results.2.inputs.sample_mass``)."""

    detail = serializers.CharField()

    def get_fields(self):
        # "fields" cannot be a class attribute: it would hide Serializer.fields
        fields = super().get_fields()
        fields["fields"] = serializers.DictField(
            child=serializers.ListField(child=serializers.CharField()),
            help_text='field name (dotted path for nested fields) -> reasons',
        )
        return fields


class ErrorSerializer(serializers.Serializer):
    """401, 403, 404, 409: the reason; a 409 may list what is missing."""

    detail = serializers.CharField()
    missing = serializers.ListField(child=serializers.CharField(), required=False)


ERROR_DESCRIPTIONS = {
    400: "Invalid input; each offending field is named",
    401: "Not authenticated",
    403: "The user's role or a domain rule does not permit this",
    404: "Not found",
    409: "Not possible in the object's present state",
}


def errors(*codes: int) -> dict[int, OpenApiResponse]:
    """Response entries for ``extend_schema(responses=...)``; 401 is always added."""
    result: dict[int, OpenApiResponse] = {}
    for code in sorted({401, *codes}):
        body = InvalidInputErrorSerializer if code == 400 else ErrorSerializer
        result[code] = OpenApiResponse(body, description=ERROR_DESCRIPTIONS[code])
    return result


IDEMPOTENCY_KEY_HEADER = "Idempotency-Key"
IDEMPOTENCY_KEY_MAX = 80

IDEMPOTENCY_KEY = OpenApiParameter(
    name=IDEMPOTENCY_KEY_HEADER,
    type=OpenApiTypes.STR,
    location=OpenApiParameter.HEADER,
    required=False,
    description=(
        f"1 to {IDEMPOTENCY_KEY_MAX} characters chosen by the client, e.g. a UUID. Sending the same key again "
        "(same user) returns the first result instead of recording another."
    ),
)
