"""Give the role groups the stability and trend permissions (frozen as written)."""
from django.contrib.auth.management import create_permissions
from django.db import migrations

GRANTS = {
    "lab_manager": ("manage_stability_study",),
    "qa_reviewer": ("manage_stability_study", "set_control_baseline", "acknowledge_alert"),
    "admin": ("manage_stability_study", "set_control_baseline", "acknowledge_alert"),
}


def grant(apps, schema_editor):
    # Permissions are normally created after migrate; create them now so groups can hold them.
    app_config = apps.get_app_config("analyses")
    app_config.models_module = True
    create_permissions(app_config, apps=apps, verbosity=0)
    app_config.models_module = None
    Group = apps.get_model("auth", "Group")
    Permission = apps.get_model("auth", "Permission")
    for role, codenames in GRANTS.items():
        group, _ = Group.objects.get_or_create(name=role)
        group.permissions.add(*Permission.objects.filter(content_type__app_label="analyses", codename__in=codenames))


class Migration(migrations.Migration):
    dependencies = [
        ("analyses", "0003_stability_and_trends"),
        ("auth", "0012_alter_user_first_name_max_length"),
        ("contenttypes", "0002_remove_content_type_name"),
    ]

    operations = [migrations.RunPython(grant, migrations.RunPython.noop)]
