"""Draw the README's example charts from the demo data into docs/.

    python manage.py demo_load          # once: the demo's QC, production and stability data
    python manage.py chart_pictures     # -> docs/chart-control.png, chart-production.png, chart-ewma.png, chart-stability.png

The series and the study come from fixtures/demo_monitoring.json (the QC reference lot, the
production series' product and method, the stability study); ``--qc-series``,
``--production-series``, ``--study``, ``--method`` and ``--condition-c`` draw others."""
from __future__ import annotations

import json
from pathlib import Path

from django.conf import settings
from django.core.management.base import BaseCommand, CommandError

DEFAULT_DIRECTORY = Path(settings.BASE_DIR) / "docs"
PICTURES = ("control", "production", "ewma", "stability")


class Command(BaseCommand):
    help = "Draw the README's example control, production, EWMA and stability charts from the demo data into docs/."

    def add_arguments(self, parser):
        parser.add_argument("--output-dir", default=str(DEFAULT_DIRECTORY), help=f"where to write the PNGs (default {DEFAULT_DIRECTORY})")
        parser.add_argument("--qc-series", help="series key of the control chart (default: the demo's QC reference lot)")
        parser.add_argument("--production-series", help="series key of the production and EWMA charts (default: the demo's)")
        parser.add_argument("--study", help="code of the stability study (default: the demo's)")
        parser.add_argument("--method", default="pv", help="the study's attribute to plot (default pv)")
        parser.add_argument("--condition-c", type=float, default=40.0, help="the condition's temperature in °C (default 40)")

    def handle(self, *args, output_dir, qc_series, production_series, study, method, condition_c, **options):
        from analyses.charts.control_chart import control_chart_png
        from analyses.charts.stability_plot import stability_plot_png
        from analyses.errors import DomainError
        from analyses.selectors.stability import study_plot
        from analyses.selectors.trend_charts import series_chart

        demo = json.loads((Path(settings.BASE_DIR) / "fixtures" / "demo_monitoring.json").read_text(encoding="utf-8"))
        qc_series = qc_series or self._demo_qc_key(demo)
        production_series = production_series or self._demo_production_key(demo)
        study_id, condition_id = self._study(study or demo["stability_study"]["code"], condition_c)
        drawings = {
            "control": lambda: control_chart_png(series_chart(qc_series)),
            "production": lambda: control_chart_png(series_chart(production_series)),
            "ewma": lambda: control_chart_png(series_chart(production_series, "ewma")),
            "stability": lambda: stability_plot_png(study_plot(study_id, method, condition_id)),
        }
        directory = Path(output_dir)
        directory.mkdir(parents=True, exist_ok=True)
        for name in PICTURES:
            try:
                picture = drawings[name]()
            except DomainError as refused:
                raise CommandError(f"the {name} chart cannot be drawn: {refused.detail}") from None
            target = directory / f"chart-{name}.png"
            target.write_bytes(picture)
            self.stdout.write(f"{name} chart written to {target}")

    def _demo_qc_key(self, demo) -> str:
        from analyses.models import Lot

        spec = demo["qc_series"]
        lot = Lot.objects.filter(code=spec["lot"]).first()
        if lot is None:
            raise CommandError(f"no lot {spec['lot']}: run manage.py demo_load first, or name a series with --qc-series")
        return f"qc:{lot.pk}:{spec['method']}"

    def _demo_production_key(self, demo) -> str:
        from analyses.models import Product

        spec = demo["production_series"]
        product = Product.objects.filter(code=spec["product"]).first()
        if product is None:
            raise CommandError(f"no product {spec['product']}: run manage.py demo_load first, or name a series with --production-series")
        return f"production:{product.pk}:{spec['method']}"

    def _study(self, code: str, celsius: float) -> tuple[int, int]:
        from analyses.models import StabilityStudy

        study = StabilityStudy.objects.filter(code=code).first()
        if study is None:
            raise CommandError(f"no stability study {code}: run manage.py demo_load first, or name one with --study")
        condition = study.conditions.filter(temperature_c=celsius).order_by("light").first()
        if condition is None:
            raise CommandError(f"study {code} has no condition at {celsius:g} °C")
        return study.pk, condition.pk
