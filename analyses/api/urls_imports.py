"""Routes of instrument file import."""
from django.urls import path

from analyses.api.views import imports as views

urlpatterns = [
    path("import-mappings/", views.ImportMappingListView.as_view(), name="import-mapping-list"),
    path("import-mappings/<int:pk>/", views.ImportMappingDetailView.as_view(), name="import-mapping-detail"),
    path("imports/", views.ResultImportListView.as_view(), name="result-import-list"),
    path("imports/<int:pk>/", views.ResultImportDetailView.as_view(), name="result-import-detail"),
]
