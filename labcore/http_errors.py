"""Error pages: JSON under /api/, Django's own pages elsewhere (used when DEBUG is off)."""
from django.http import JsonResponse
from django.views import defaults


def not_found(request, exception):
    if request.path.startswith("/api/"):
        return JsonResponse({"detail": "Not found."}, status=404)
    return defaults.page_not_found(request, exception)


def server_error(request):
    if request.path.startswith("/api/"):
        return JsonResponse({"detail": "Internal error; it has been logged."}, status=500)
    return defaults.server_error(request)
