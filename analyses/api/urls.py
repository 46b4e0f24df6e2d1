from django.urls import path

from analyses.api import methods

urlpatterns = [
    path("methods/", methods.MethodListView.as_view(), name="method-list"),
    path("methods/<str:code>/", methods.MethodDetailView.as_view(), name="method-detail"),
    path("calculations/", methods.CalculationView.as_view(), name="calculation"),
]
