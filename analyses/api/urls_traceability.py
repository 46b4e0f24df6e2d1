"""Routes of reagent kinds, titrant lots, standardisations, instruments and the impact search."""
from django.urls import path

from analyses.api.views import traceability as views

urlpatterns = [
    path("reagent-kinds/", views.ReagentKindListView.as_view(), name="reagent-kind-list"),
    path("reagent-kinds/<int:pk>/", views.ReagentKindDetailView.as_view(), name="reagent-kind-detail"),
    path("reagent-kinds/<int:pk>/change/", views.ReagentKindChangeView.as_view(), name="reagent-kind-change"),
    path("reagent-lots/", views.ReagentLotListView.as_view(), name="reagent-lot-list"),
    path("reagent-lots/<int:pk>/", views.ReagentLotDetailView.as_view(), name="reagent-lot-detail"),
    path("reagent-lots/<int:pk>/standardisations/", views.LotStandardisationListView.as_view(), name="reagent-lot-standardisations"),
    path("reagent-lots/<int:pk>/impact/", views.ReagentLotImpactView.as_view(), name="reagent-lot-impact"),
    path("standardisations/<int:pk>/", views.StandardisationDetailView.as_view(), name="standardisation-detail"),
    path("standardisations/<int:pk>/supersede/", views.StandardisationSupersedeView.as_view(), name="standardisation-supersede"),
    path("instruments/", views.InstrumentListView.as_view(), name="instrument-list"),
    path("instruments/<int:pk>/", views.InstrumentDetailView.as_view(), name="instrument-detail"),
    path("instruments/<int:pk>/calibrations/", views.CalibrationListView.as_view(), name="instrument-calibrations"),
    path("instruments/<int:pk>/checks/", views.InstrumentCheckListView.as_view(), name="instrument-checks"),
    path("instruments/<int:pk>/impact/", views.InstrumentImpactView.as_view(), name="instrument-impact"),
]
