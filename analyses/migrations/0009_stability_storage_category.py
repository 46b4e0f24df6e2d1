"""Issue 7: a study declares its ICH Q1E storage category, and an attribute may carry the
change that counts as significant at the accelerated and intermediate conditions.

Existing studies get the category of their storage temperature (the same boundaries as
``analyses.stability.extrapolation.storage_category_for``, copied here so the migration
stays as written): at or below −10 °C frozen, at or below 10 °C refrigerated, else room
temperature."""
from django.db import migrations, models


def categorise(apps, schema_editor):
    StabilityStudy = apps.get_model("analyses", "StabilityStudy")
    StabilityStudy.objects.filter(storage_temperature_c__lte=10).update(storage_category="refrigerated")
    StabilityStudy.objects.filter(storage_temperature_c__lte=-10).update(storage_category="frozen")


class Migration(migrations.Migration):
    dependencies = [
        ("analyses", "0008_exact_values"),
    ]

    operations = [
        migrations.AddField(
            model_name="stabilitystudy",
            name="storage_category",
            field=models.CharField(
                choices=[("room_temperature", "Room temperature"), ("refrigerated", "Refrigerated"), ("frozen", "Frozen")],
                default="room_temperature",
                help_text="ICH Q1E storage category of the label; decides the extrapolation allowed",
                max_length=20,
            ),
        ),
        migrations.AddField(
            model_name="studyattribute",
            name="significant_change",
            field=models.FloatField(
                blank=True,
                help_text="a change from the initial value larger than this (result unit) at the accelerated or "
                "intermediate condition is a significant change (ICH Q1E); the limits count in any case",
                null=True,
            ),
        ),
        migrations.RunPython(categorise, migrations.RunPython.noop),
    ]
