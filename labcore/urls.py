from django.contrib import admin
from django.urls import include, path
from drf_spectacular.views import SpectacularAPIView, SpectacularRedocView, SpectacularSwaggerView

from labcore import health, metrics_http
from labcore.api_root import api_root

urlpatterns = [
    path("healthz", health.healthz, name="healthz"),
    path("readyz", health.readyz, name="readyz"),
    path("metrics", metrics_http.metrics, name="metrics"),
    path("admin/", admin.site.urls),
    path("api/", api_root, name="api-root"),
    path("api/", include("analyses.api.urls")),
    path("api/", include("analyses.api.urls_monitoring")),
    path("api/", include("analyses.api.urls_traceability")),
    path("api/", include("analyses.api.urls_imports")),
    path("api/auth/", include("rest_framework.urls")),
    path("api/schema/", SpectacularAPIView.as_view(), name="schema"),
    path("api/docs/", SpectacularSwaggerView.as_view(url_name="schema"), name="api-docs"),
    path("api/redoc/", SpectacularRedocView.as_view(url_name="schema"), name="api-redoc"),
]

handler404 = "labcore.http_errors.not_found"
handler500 = "labcore.http_errors.server_error"
