"""Only QA approves specifications and releases or rejects lots (issue 3): the admin role
gives up approve_specification and release_lot (frozen as written)."""
from django.db import migrations

QA_ONLY = ("approve_specification", "release_lot")


def _admin_permissions(apps):
    Group = apps.get_model("auth", "Group")
    Permission = apps.get_model("auth", "Permission")
    group = Group.objects.filter(name="admin").first()
    permissions = Permission.objects.filter(content_type__app_label="analyses", codename__in=QA_ONLY)
    return group, permissions


def revoke(apps, schema_editor):
    group, permissions = _admin_permissions(apps)
    if group is not None:
        group.permissions.remove(*permissions)


def restore(apps, schema_editor):
    group, permissions = _admin_permissions(apps)
    if group is not None:
        group.permissions.add(*permissions)


class Migration(migrations.Migration):
    dependencies = [
        ("analyses", "0006_audit_chain_head"),
        ("auth", "0012_alter_user_first_name_max_length"),
    ]

    operations = [migrations.RunPython(revoke, restore)]
