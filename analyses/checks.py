"""System checks: a rejected method plugin is reported, but does not stop the service."""
from django.core.checks import Tags, Warning, register

from plugins.registry import method_registry

# Its own tag too, so that calc and methods run this check alone (they load no API).
PLUGINS_TAG = "plugins"


@register(Tags.compatibility, PLUGINS_TAG)
def rejected_method_plugins(app_configs, **kwargs):
    return [
        Warning(
            f"Method plugin {rejected.entry_point} was left out: {rejected.reason}",
            hint="Fix the plugin or uninstall its package; the other methods are unaffected.",
            id="analyses.W001",
        )
        for rejected in method_registry.rejected
    ]
