"""Saved planning scenarios. Parameters are JSON checked by ``planner.params``."""

from django.conf import settings
from django.core.exceptions import ValidationError
from django.db import models
from django.db.models import Q
from django.urls import reverse

from planner.params import StockWalkParams


class ScenarioKind(models.TextChoices):
    STOCK_WALK = "stock_walk", "Stock walk"


class Scenario(models.Model):
    owner = models.ForeignKey(settings.AUTH_USER_MODEL, on_delete=models.CASCADE, related_name="scenarios")
    title = models.CharField(max_length=120)
    notes = models.TextField(blank=True)
    kind = models.CharField(max_length=32, choices=ScenarioKind.choices, default=ScenarioKind.STOCK_WALK)
    parameters = models.JSONField()
    # Largest acceptable probability of at least one stock-out (overflow) within the horizon.
    stockout_target = models.FloatField(default=0.05)
    overflow_target = models.FloatField(default=0.05)
    created = models.DateTimeField(auto_now_add=True)
    updated = models.DateTimeField(auto_now=True)

    class Meta:
        ordering = ["-updated", "-id"]
        indexes = [models.Index(fields=["owner", "-updated"], name="scenario_owner_updated")]
        constraints = [
            models.CheckConstraint(condition=~Q(title=""), name="scenario_title_not_empty"),
            models.CheckConstraint(condition=Q(kind__in=ScenarioKind.values), name="scenario_kind_known"),
            models.CheckConstraint(
                condition=Q(stockout_target__gt=0, stockout_target__lt=1), name="scenario_stockout_target_open_unit"
            ),
            models.CheckConstraint(
                condition=Q(overflow_target__gt=0, overflow_target__lt=1), name="scenario_overflow_target_open_unit"
            ),
        ]

    def __str__(self) -> str:
        return self.title

    def get_absolute_url(self) -> str:
        return reverse("scenario_results", args=[self.pk])

    def clean(self) -> None:
        if self.kind == ScenarioKind.STOCK_WALK:
            try:
                StockWalkParams.from_json(self.parameters)
            except ValueError as exc:
                raise ValidationError({"parameters": str(exc)}) from exc

    @property
    def walk_params(self) -> StockWalkParams:
        """The parameters as a dataclass (validated again on each access)."""
        return StockWalkParams.from_json(self.parameters)
