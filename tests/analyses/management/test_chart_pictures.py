"""manage.py chart_pictures: the README's example charts, drawn from the database."""
from __future__ import annotations

from io import StringIO

import pytest
from django.core.management import CommandError, call_command

from analyses.models import SampleKind
from analyses.services.trend_scan import control_baseline_set
from tests.analyses.lab_setup import *  # noqa: F403  (shared fixtures)
from tests.analyses.series_setup import accepted_series
from tests.factories import LotFactory

pytestmark = pytest.mark.django_db
PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"  # PNG specification (ISO/IEC 15948), file signature


def test_without_the_demo_it_says_what_to_load(tmp_path):
    with pytest.raises(CommandError, match="run manage.py demo_load first"):
        call_command("chart_pictures", "--output-dir", str(tmp_path))
    assert not list(tmp_path.iterdir())


def test_named_series_are_drawn_and_a_missing_study_is_refused_by_name(users, product, tmp_path):
    material = LotFactory(code="REF-AV-7", product=product)
    qc_key, production_key = f"qc:{material.pk}:av", f"production:{product.pk}:av"
    for key in (qc_key, production_key):
        control_baseline_set(users["qa"], series_key=key, mean=0.35, sd=0.01)
    accepted_series(material, [0.35, 0.36, 0.34, 0.39])
    accepted_series(LotFactory(code="RSO-1", product=product), [0.35, 0.36, 0.34], kind=SampleKind.ROUTINE)
    with pytest.raises(CommandError, match="no stability study NOPE"):
        call_command("chart_pictures", "--output-dir", str(tmp_path), "--qc-series", qc_key,
                     "--production-series", production_key, "--study", "NOPE")
    assert not list(tmp_path.iterdir())  # the study is looked up before anything is drawn


def test_the_demo_pictures_are_drawn(monkeypatch, tmp_path):
    """Every picture goes through the same renderers as the API; the study is the only
    part the command looks up itself, so it is stood in for here (demo_load takes minutes)."""
    from analyses.management.commands import chart_pictures

    monkeypatch.setattr(chart_pictures.Command, "_demo_qc_key", lambda self, demo: "qc:1:av")
    monkeypatch.setattr(chart_pictures.Command, "_demo_production_key", lambda self, demo: "production:1:av")
    monkeypatch.setattr(chart_pictures.Command, "_study", lambda self, code, celsius: (1, 1))
    drawn = []
    monkeypatch.setattr("analyses.selectors.trend_charts.series_chart", lambda key, chart="shewhart": drawn.append((key, chart)) or {"key": key})
    monkeypatch.setattr("analyses.selectors.stability.study_plot", lambda *args: drawn.append(args) or {})
    monkeypatch.setattr("analyses.charts.control_chart.control_chart_png", lambda data: PNG_SIGNATURE)
    monkeypatch.setattr("analyses.charts.stability_plot.stability_plot_png", lambda data: PNG_SIGNATURE)
    out = StringIO()
    call_command("chart_pictures", "--output-dir", str(tmp_path), stdout=out)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["chart-control.png", "chart-ewma.png", "chart-production.png", "chart-stability.png"]
    assert drawn == [("qc:1:av", "shewhart"), ("production:1:av", "shewhart"), ("production:1:av", "ewma"), (1, "pv", 1)]
    assert out.getvalue().count("chart written to") == 4
