"""Absolute links to the charts, for alert texts, e-mails and webhooks (``OLEOTRACE_BASE_URL``)."""
from __future__ import annotations

from urllib.parse import urlencode

from django.conf import settings
from django.urls import reverse


def absolute_url(path: str) -> str:
    return f"{settings.OLEOTRACE_BASE_URL}{path}"


def series_chart_url(series_key: str, chart: str = "shewhart") -> str:
    """The PNG of a series' control chart (``chart="ewma"``: its EWMA chart)."""
    path = reverse("series-chart-image", kwargs={"key": series_key, "fmt": "png"})
    return absolute_url(path + ("?chart=ewma" if chart == "ewma" else ""))


def study_plot_url(study_id: int, method_code: str, condition_id: int) -> str:
    path = reverse("study-plot-image", kwargs={"pk": study_id, "fmt": "png"})
    return absolute_url(f"{path}?{urlencode({'method': method_code, 'condition': condition_id})}")


def study_url(study_id: int) -> str:
    return absolute_url(reverse("study-detail", kwargs={"pk": study_id}))


def alert_url(alert_id: int) -> str:
    return absolute_url(reverse("alert-detail", kwargs={"pk": alert_id}))
