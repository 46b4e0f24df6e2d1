"""Method scope, FFA basis and blanks (issue 7, section 4): a specification line carries the
basis its unit follows, and a test carries its review warnings."""

from django.db import migrations, models

FFA_UNIT_PREFIX = "% as "


def basis_from_unit(apps, schema_editor):
    # FFA lines written before this migration are all "% as oleic"; their basis says so.
    SpecificationLine = apps.get_model("analyses", "SpecificationLine")
    for line in SpecificationLine.objects.filter(method_code="ffa", unit__startswith=FFA_UNIT_PREFIX):
        SpecificationLine.objects.filter(pk=line.pk).update(basis=line.unit[len(FFA_UNIT_PREFIX):])


class Migration(migrations.Migration):

    dependencies = [
        ("analyses", "0010_audit_guard"),
    ]

    operations = [
        migrations.AddField(
            model_name="specificationline",
            name="basis",
            field=models.CharField(blank=True, max_length=40),
        ),
        migrations.AddField(
            model_name="test",
            name="review_warnings",
            field=models.JSONField(
                blank=True,
                default=list,
                help_text="What the reviewer should weigh (result outside the method's scope, blank not run); never a block",
            ),
        ),
        migrations.RunPython(basis_from_unit, migrations.RunPython.noop),
    ]
