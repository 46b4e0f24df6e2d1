from django.conf import settings
from django.db import migrations, models
import django.db.models.deletion


class Migration(migrations.Migration):

    dependencies = [
        ("analyses", "0017_result_components"),
        migrations.swappable_dependency(settings.AUTH_USER_MODEL),
    ]

    operations = [
        migrations.CreateModel(
            name="ImportMapping",
            fields=[
                ("id", models.BigAutoField(auto_created=True, primary_key=True, serialize=False, verbose_name="ID")),
                ("name", models.CharField(help_text='e.g. "titrator 2 export"', max_length=80, unique=True)),
                ("layout", models.CharField(choices=[("titrator", "Titrator table: sample, method, titre, blank, titrant lot"), ("gc", "GC table: sample, component, area or area %")], max_length=16)),
                ("columns", models.JSONField(help_text="role -> column heading in the file")),
                ("extra_inputs", models.JSONField(blank=True, default=dict, help_text="method input name -> column heading")),
                ("default_instruments", models.JSONField(blank=True, default=list, help_text="asset ids used for every row")),
                ("created_at", models.DateTimeField()),
                ("created_by", models.ForeignKey(on_delete=django.db.models.deletion.PROTECT, related_name="+", to=settings.AUTH_USER_MODEL)),
            ],
            options={"ordering": ["name"]},
        ),
        migrations.CreateModel(
            name="ResultImport",
            fields=[
                ("id", models.BigAutoField(auto_created=True, primary_key=True, serialize=False, verbose_name="ID")),
                ("sha256", models.CharField(max_length=64, unique=True)),
                ("file_name", models.CharField(max_length=255)),
                ("size_bytes", models.PositiveIntegerField()),
                ("rows", models.PositiveIntegerField(default=0)),
                ("result_ids", models.JSONField(default=list)),
                ("imported_at", models.DateTimeField()),
                ("imported_by", models.ForeignKey(on_delete=django.db.models.deletion.PROTECT, related_name="+", to=settings.AUTH_USER_MODEL)),
                ("mapping", models.ForeignKey(on_delete=django.db.models.deletion.PROTECT, related_name="imports", to="analyses.importmapping")),
            ],
            options={"ordering": ["-imported_at", "-id"]},
        ),
    ]
