"""Error pages: JSON under /api/, Django's own pages elsewhere (used when DEBUG is off)."""
from django.http import JsonResponse
from django.views import defaults

from labcore.request_id import current_request_id


def not_found(request, exception):
    if request.path.startswith("/api/"):
        return JsonResponse({"detail": "Not found."}, status=404)
    return defaults.page_not_found(request, exception)


def server_error(request):
    """The traceback went to the log (``django.request``, see LOGGING) under this request id."""
    if request.path.startswith("/api/"):
        request_id = getattr(request, "request_id", None) or current_request_id()
        return JsonResponse(
            {"detail": f"Internal error; it has been logged with request id {request_id}.", "request_id": request_id},
            status=500,
        )
    return defaults.server_error(request)
