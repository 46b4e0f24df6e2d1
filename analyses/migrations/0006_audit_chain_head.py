"""The audit chain head records the last entry (sequence and hash); existing chains get
theirs from their last entry."""
from django.db import migrations, models

GENESIS_HASH = "0" * 64


def record_head(apps, schema_editor):
    AuditEntry = apps.get_model("analyses", "AuditEntry")
    AuditChainHead = apps.get_model("analyses", "AuditChainHead")
    last = AuditEntry.objects.order_by("-sequence").values("sequence", "entry_hash").first()
    if last is None:
        return
    AuditChainHead.objects.update_or_create(
        id=1, defaults={"last_sequence": last["sequence"], "last_hash": last["entry_hash"]}
    )


class Migration(migrations.Migration):
    dependencies = [
        ("analyses", "0005_alert_notify_after"),
    ]

    operations = [
        migrations.AddField(
            model_name="auditchainhead",
            name="last_hash",
            field=models.CharField(default=GENESIS_HASH, help_text="entry_hash of the last entry", max_length=64),
        ),
        migrations.AddField(
            model_name="auditchainhead",
            name="last_sequence",
            field=models.PositiveBigIntegerField(default=0, help_text="sequence of the last entry; 0: none yet"),
        ),
        migrations.RunPython(record_head, migrations.RunPython.noop),
    ]
