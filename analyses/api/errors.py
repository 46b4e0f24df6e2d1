"""One error format for the whole API.

400: {"detail": "...", "fields": {"<field>": ["<reason>", ...]}}
403, 404, 409: {"detail": "<reason>"} (409 adds "missing": [...] where something is missing)
"""
from __future__ import annotations

import logging
from typing import Any

from django.core.exceptions import ValidationError as DjangoValidationError
from django.http import Http404
from rest_framework import exceptions, status
from rest_framework.response import Response
from rest_framework.views import exception_handler as drf_exception_handler

from analyses.errors import Conflict, DomainError

logger = logging.getLogger(__name__)


def _flatten(errors: Any, prefix: str = "") -> dict[str, list[str]]:
    """DRF's nested error dicts and lists become {"a.b.0.c": [messages]}."""
    flat: dict[str, list[str]] = {}
    if isinstance(errors, dict):
        for key, value in errors.items():
            name = f"{prefix}.{key}" if prefix else str(key)
            if name == "non_field_errors" or key == "non_field_errors":
                name = prefix or "non_field_errors"
            for k, v in _flatten(value, name).items():
                flat.setdefault(k, []).extend(v)
    elif isinstance(errors, list):
        if all(not isinstance(item, (dict, list)) for item in errors):
            flat[prefix or "non_field_errors"] = [str(item) for item in errors]
        else:
            for index, item in enumerate(errors):
                for k, v in _flatten(item, f"{prefix}.{index}" if prefix else str(index)).items():
                    flat.setdefault(k, []).extend(v)
    else:
        flat[prefix or "non_field_errors"] = [str(errors)]
    return flat


def _field_error_response(fields: dict[str, list[str]]) -> Response:
    summary = "; ".join(f"{name}: {' '.join(reasons)}" for name, reasons in fields.items())
    return Response({"detail": summary or "Invalid input.", "fields": fields}, status=status.HTTP_400_BAD_REQUEST)


def exception_handler(exc: Exception, context: dict) -> Response | None:
    if isinstance(exc, DomainError):
        if exc.status_code == 400:
            return _field_error_response(exc.fields or {"non_field_errors": [exc.detail]})
        body: dict[str, Any] = {"detail": exc.detail}
        if isinstance(exc, Conflict) and exc.missing:
            body["missing"] = exc.missing
        return Response(body, status=exc.status_code)
    if isinstance(exc, DjangoValidationError):
        fields = exc.message_dict if hasattr(exc, "error_dict") else {"non_field_errors": exc.messages}
        return _field_error_response(fields)
    if isinstance(exc, exceptions.ValidationError):
        return _field_error_response(_flatten(exc.detail))
    if isinstance(exc, exceptions.ParseError):
        return _field_error_response({"body": [str(exc.detail)]})
    response = drf_exception_handler(exc, context)
    if response is not None:
        detail = response.data.get("detail") if isinstance(response.data, dict) else response.data
        response.data = {"detail": str(detail)}
        return response
    if isinstance(exc, Http404):
        return Response({"detail": "Not found."}, status=status.HTTP_404_NOT_FOUND)
    return None
