"""Create the role groups (lab_manager, analyst, qa_reviewer, admin) with their permissions.

The mapping is frozen here as it stood when this migration was written; later changes go
in new migrations (or ``analyses.roles.roles_ensure()``).
"""
from django.contrib.auth.management import create_permissions
from django.db import migrations

PERMISSION_MODELS = {
    "add_product": "product",
    "draft_specification": "specification",
    "approve_specification": "specification",
    "create_lot": "lot",
    "release_lot": "lot",
    "register_sample": "sample",
    "receive_sample": "sample",
    "hold_sample": "sample",
    "cancel_sample": "sample",
    "assign_test": "test",
    "review_test": "test",
    "record_result": "test",
    "record_any_result": "test",
    "close_investigation": "investigation",
    "view_audit_trail": "auditentry",
}

ROLE_PERMISSIONS = {
    "lab_manager": (
        "add_product", "draft_specification", "create_lot", "register_sample", "receive_sample",
        "hold_sample", "cancel_sample", "assign_test", "review_test", "view_audit_trail",
    ),
    "analyst": ("record_result", "review_test"),
    "qa_reviewer": (
        "draft_specification", "approve_specification", "release_lot", "hold_sample", "review_test",
        "close_investigation", "view_audit_trail",
    ),
    "admin": tuple(PERMISSION_MODELS),
}


def create_roles(apps, schema_editor):
    # Permissions are normally created after migrate; create them now so groups can hold them.
    app_config = apps.get_app_config("analyses")
    app_config.models_module = True
    create_permissions(app_config, apps=apps, verbosity=0)
    app_config.models_module = None
    Group = apps.get_model("auth", "Group")
    Permission = apps.get_model("auth", "Permission")
    for role, codenames in ROLE_PERMISSIONS.items():
        group, _ = Group.objects.get_or_create(name=role)
        group.permissions.set(
            Permission.objects.filter(content_type__app_label="analyses", codename__in=codenames)
        )


def remove_roles(apps, schema_editor):
    apps.get_model("auth", "Group").objects.filter(name__in=list(ROLE_PERMISSIONS)).delete()


class Migration(migrations.Migration):
    dependencies = [
        ("analyses", "0001_domain"),
        ("auth", "0012_alter_user_first_name_max_length"),
        ("contenttypes", "0002_remove_content_type_name"),
    ]

    operations = [migrations.RunPython(create_roles, remove_roles)]
