"""Migration 0009: studies created before the storage category existed get the category of
their storage temperature, never the permissive room-temperature default."""
import datetime as dt
import importlib

import pytest
from django.apps import apps

from analyses.models import StabilityStudy
from analyses.services.stability import stability_study_create
from analyses.stability.extrapolation import storage_category_for

migration = importlib.import_module("analyses.migrations.0009_stability_storage_category")


@pytest.mark.parametrize("storage_c, expected", [(25, "room_temperature"), (10, "refrigerated"), (5, "refrigerated"), (-10, "frozen"), (-20, "frozen")])
def test_existing_studies_take_the_category_of_their_storage_temperature(users, lot, storage_c, expected):
    study = stability_study_create(
        users["manager"], code=f"OLD-{storage_c}", title="before issue 7", product=lot.product_id, lots=[lot.pk],
        started_on=dt.date(2026, 1, 1), storage_temperature_c=storage_c, claimed_shelf_life_months=12,
        conditions=[{"temperature_c": storage_c}], pull_points=[{"offset": 0}], attributes=[{"method_code": "pv", "maximum": 10}],
    )
    StabilityStudy.objects.filter(pk=study.pk).update(storage_category="room_temperature")  # the column's default
    migration.categorise(apps, None)
    study.refresh_from_db()
    assert study.storage_category == expected
    # the copy in the migration agrees with the code's boundaries
    assert storage_category_for(storage_c) == expected
