from django.contrib import admin

from planner.models import Scenario


@admin.register(Scenario)
class ScenarioAdmin(admin.ModelAdmin):
    list_display = [
        "title",
        "owner",
        "kind",
        "headline_risk",
        "stockout_target",
        "overflow_target",
        "version",
        "updated",
    ]
    list_filter = ["kind"]
    search_fields = ["title", "notes", "owner__username"]
    readonly_fields = ["created", "updated", "headline_risk", "headline_span", "version"]

    def has_change_permission(self, request, obj=None) -> bool:
        # Plans change only through the planner's pages, which keep their version, history and headline.
        return False
