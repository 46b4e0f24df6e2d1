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

# The project's own response header (not another service's convention): set on a replayed entry.
REPLAYED_HEADER = "Oleotrace-Replayed"

REPLAYED = OpenApiParameter(
    name=REPLAYED_HEADER,
    type=OpenApiTypes.STR,
    location=OpenApiParameter.HEADER,
    response=[201],
    enum=["true"],
    description=(
        "Present, with the value `true`, only when this answer repeats an earlier one: the request carried an "
        "Idempotency-Key already used by the same user, so nothing new was recorded."
    ),
)


# Answers every operation of a kind can give, added where a view's own description leaves them out.
NOT_AUTHENTICATED = "Not authenticated: no credentials, or a token that is not valid"
NOT_FOUND_IN_PATH = "Not found: no such object (or one outside what the user may see)"
PAGE_NOT_FOUND = "Not found: a page that does not exist (`?page=0`, a page beyond the last, or not a number)"


def _error_response(description: str) -> dict:
    return {
        "content": {"application/json": {"schema": {"$ref": "#/components/schemas/Error"}}},
        "description": description,
    }


def default_responses(result: dict, generator, request, public) -> dict:
    """drf-spectacular postprocessing hook: document the answers the framework itself gives.

    - 401 wherever a caller must authenticate (the operation's security has no ``{}``);
    - 404 wherever the path names an object, and on every paged list (DRF answers
      ``?page=0`` or a page beyond the last with 404).
    """
    for path, operations in result.get("paths", {}).items():
        for method, operation in operations.items():
            responses = operation.setdefault("responses", {})
            if {} not in operation.get("security", [{}]):
                responses.setdefault("401", _error_response(NOT_AUTHENTICATED))
            if "{" in path:
                responses.setdefault("404", _error_response(NOT_FOUND_IN_PATH))
            query = {p["name"] for p in operation.get("parameters", []) if p.get("in") == "query"}
            if method == "get" and "page" in query:
                if "404" in responses:
                    described = responses["404"]
                    responses["404"] = {**described, "description": f"{described['description']}; or {PAGE_NOT_FOUND[11:]}"}
                else:
                    responses["404"] = _error_response(PAGE_NOT_FOUND)
            operation["responses"] = dict(sorted(responses.items()))
    return result


def integrator_texts(result: dict, generator, request, public) -> dict:
    """drf-spectacular postprocessing hook: the descriptions of ``analyses.api.integrator_texts``
    on each operation and schema component, and one for every page of a list."""
    from analyses.api.integrator_texts import OPERATIONS, SCHEMAS

    for operations in result.get("paths", {}).values():
        for operation in operations.values():
            text = OPERATIONS.get(operation.get("operationId"))
            if text:
                operation["description"] = text
    for name, component in result.get("components", {}).get("schemas", {}).items():
        if name in SCHEMAS:
            component["description"] = SCHEMAS[name]
        elif name.startswith("Paginated") and name.endswith("List"):
            item = name.removeprefix("Paginated").removesuffix("List")
            component["description"] = (
                f"A page of a list: `count` of everything that matches, links to the `next` and `previous` pages "
                f"(null at either end), and `results`, each a {item}."
            )
    return result
