"""Profiles (issue 11): a result of a profile method keeps every component it computed.

Specification lines and tests name a component in their method code ("fac:C18:2"), which
needs no schema change; only the result's components are new."""
from django.db import migrations, models


class Migration(migrations.Migration):
    dependencies = [("analyses", "0016_instrument_kind_oxidative_stability")]

    operations = [
        migrations.AddField(
            model_name="result",
            name="components",
            field=models.JSONField(blank=True, default=dict),
        ),
    ]
