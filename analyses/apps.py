from django.apps import AppConfig


class AnalysesConfig(AppConfig):
    name = "analyses"
    verbose_name = "Oil analyses"
    default_auto_field = "django.db.models.BigAutoField"

    def ready(self) -> None:
        from analyses import checks  # noqa: F401  (registers the system checks)
        from analyses import signals  # noqa: F401  (connects the receivers)
        from analyses import login_guard  # noqa: F401  (connects the failed-login counting)
        from plugins.registry import method_registry

        # Load the method plugins once per process, at start-up.
        if not method_registry.loaded:
            method_registry.load()
