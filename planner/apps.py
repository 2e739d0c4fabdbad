from django.apps import AppConfig


class PlannerConfig(AppConfig):
    default_auto_field = "django.db.models.BigAutoField"
    name = "planner"
    verbose_name = "Fluctuation Planner"

    def ready(self) -> None:
        from planner import kinds

        kinds.discover()
