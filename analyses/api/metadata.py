"""What ``OPTIONS`` answers: the fields a client may send.

DRF describes a POST with the view's output serializer, so every field of a list that
also creates (products, lots, samples …) came out read-only. A view that takes its input
through another serializer names it in ``input_serializer_classes`` (by HTTP method), and
``OPTIONS`` describes that one.
"""
from __future__ import annotations

from django.core.exceptions import PermissionDenied
from django.http import Http404
from rest_framework import exceptions
from rest_framework.metadata import SimpleMetadata
from rest_framework.request import clone_request


class InputFieldsMetadata(SimpleMetadata):
    def determine_actions(self, request, view):
        declared = getattr(view, "input_serializer_classes", {})
        actions = {}
        for method in {"PUT", "POST"} & set(view.allowed_methods):
            view.request = clone_request(request, method)
            try:
                if hasattr(view, "check_permissions"):
                    view.check_permissions(view.request)
                if method == "PUT" and hasattr(view, "get_object"):
                    view.get_object()
            except (exceptions.APIException, PermissionDenied, Http404):
                pass  # a caller who may not write sees no action, as DRF does
            else:
                if method in declared:
                    serializer = declared[method](context={"request": view.request, "view": view})
                elif hasattr(view, "get_serializer"):
                    serializer = view.get_serializer()
                else:
                    continue
                actions[method] = self.get_serializer_info(serializer)
            finally:
                view.request = request
        return actions
