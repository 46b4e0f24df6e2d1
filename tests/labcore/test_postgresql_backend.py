"""labcore.postgresql: Django's backend with bulk inserts as VALUES lists (issue 12)."""
from __future__ import annotations

import pytest
from django.conf import settings
from django.test.utils import CaptureQueriesContext

from django.utils import timezone

from analyses.models import Product
from tests.factories import UserFactory

pytestmark = pytest.mark.django_db


def test_postgresql_urls_select_the_project_backend(postgres):
    assert settings.DATABASES["default"]["ENGINE"] == "labcore.postgresql"
    assert postgres.vendor == "postgresql"


def test_a_bulk_insert_is_one_values_list_with_its_values_as_written(postgres):
    names = ['Crude "degummed" soybean', "Palm olein \\ RBD", "Rapeseed, cold-pressed"]
    by, now = UserFactory(), timezone.now()
    rows = [Product(code=f"BK-{n}", name=name, oil_type="soybean", created_by=by, created_at=now) for n, name in enumerate(names)]
    with CaptureQueriesContext(postgres) as captured:
        Product.objects.bulk_create(rows)
    [insert] = [q["sql"] for q in captured.captured_queries if q["sql"].startswith("INSERT")]
    assert "UNNEST" not in insert and "VALUES" in insert
    assert sorted(Product.objects.filter(code__startswith="BK-").values_list("name", flat=True)) == sorted(names)
    assert all(row.pk for row in rows)  # ids come back, as Django's own backend gives them
