"""Routes of stability studies, alerts and trend charts."""
from django.urls import path, re_path

from analyses.api.views import alerts, stability

urlpatterns = [
    path("stability-studies/", stability.StudyListView.as_view(), name="study-list"),
    path("stability-studies/<int:pk>/", stability.StudyDetailView.as_view(), name="study-detail"),
    path("stability-studies/<int:pk>/evaluate/", stability.StudyEvaluateView.as_view(), name="study-evaluate"),
    path("stability-studies/<int:pk>/close/", stability.StudyCloseView.as_view(), name="study-close"),
    path("stability-studies/<int:pk>/pull-points/", stability.PullPointListView.as_view(), name="study-pull-points"),
    path("stability-studies/<int:pk>/plot/", stability.StudyPlotView.as_view(), name="study-plot"),
    re_path(r"^stability-studies/(?P<pk>\d+)/plot\.(?P<fmt>png|svg)$", stability.StudyPlotImageView.as_view(), name="study-plot-image"),
    path("alerts/", alerts.AlertListView.as_view(), name="alert-list"),
    path("alerts/<int:pk>/", alerts.AlertDetailView.as_view(), name="alert-detail"),
    path("alerts/<int:pk>/acknowledge/", alerts.AlertAcknowledgeView.as_view(), name="alert-acknowledge"),
    path("trends/baselines/", alerts.BaselineListView.as_view(), name="baseline-list"),
    path("trends/series/", alerts.SeriesListView.as_view(), name="series-list"),
    path("trends/series/<str:key>/chart/", alerts.SeriesChartView.as_view(), name="series-chart"),
    re_path(r"^trends/series/(?P<key>[^/]+)/chart\.(?P<fmt>png|svg)$", alerts.SeriesChartImageView.as_view(), name="series-chart-image"),
]
