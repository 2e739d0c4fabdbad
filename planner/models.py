"""Saved planning scenarios. Parameters are JSON checked by the scenario's kind (``planner.kinds``)."""

import hashlib

from django.conf import settings
from django.core.exceptions import ValidationError
from django.db import models
from django.db.models import Q
from django.urls import reverse

from planner.kinds import get_kind


class ScenarioKind(models.TextChoices):
    # One line per kind in planner/kinds/ (its key) and a migration: the database refuses unknown kinds.
    STOCK_PLAN = "stock_plan", "Stock plan"
    REORDER_PLAN = "reorder_plan", "Reorder plan"
    SPARES_POOL = "spares_pool", "Spares pool"
    RATE_TABLE = "rate_table", "Rate-table pool"


class Scenario(models.Model):
    owner = models.ForeignKey(settings.AUTH_USER_MODEL, on_delete=models.CASCADE, related_name="scenarios")
    title = models.CharField(max_length=120)
    notes = models.TextField(blank=True)
    kind = models.CharField(max_length=32, choices=ScenarioKind.choices, default=ScenarioKind.STOCK_PLAN)
    parameters = models.JSONField()
    # Largest acceptable probability of at least one stock-out (overflow) within the horizon (fractions).
    stockout_target = models.FloatField(default=0.05)
    overflow_target = models.FloatField(default=0.05)
    # Stock-out risk over the horizon, computed by the write services at each save so the list never
    # recomputes plans; null for rows saved before it was kept.
    headline_risk = models.FloatField(null=True, blank=True)
    headline_span = models.CharField(max_length=60, blank=True)  # "56 days (8 weeks)"
    # Raised by one at every save (planner/services.py): an edit based on an older number is refused.
    version = models.PositiveIntegerField(default=1)
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
            models.CheckConstraint(
                condition=Q(headline_risk__isnull=True) | Q(headline_risk__gte=0, headline_risk__lte=1),
                name="scenario_headline_risk_probability",
            ),
            models.CheckConstraint(condition=Q(version__gte=1), name="scenario_version_positive"),
        ]

    def __str__(self) -> str:
        return self.title

    def get_absolute_url(self) -> str:
        return reverse("scenario_results", args=[self.pk])

    def clean(self) -> None:
        try:
            get_kind(self.kind).params_from_json(self.parameters)
        except ValueError as exc:
            raise ValidationError({"parameters": str(exc)}) from exc

    @property
    def params(self):
        """The parameters as the kind's plain object (validated again on each access)."""
        return get_kind(self.kind).params_from_json(self.parameters)

    @property
    def meets_target(self) -> bool | None:
        return None if self.headline_risk is None else self.headline_risk <= self.stockout_target


class ScenarioVersion(models.Model):
    """What one save of a scenario wrote (its number, who, when, the fields a person edits): the plan's history.

    Written by the write services in the same transaction as the save, so every version a scenario has had
    is here (rows saved before history was kept start at the version they had then).
    """

    scenario = models.ForeignKey(Scenario, on_delete=models.CASCADE, related_name="versions")
    number = models.PositiveIntegerField()
    saved_by = models.ForeignKey(settings.AUTH_USER_MODEL, on_delete=models.SET_NULL, null=True, related_name="+")
    saved_at = models.DateTimeField()
    title = models.CharField(max_length=120)
    notes = models.TextField(blank=True)
    parameters = models.JSONField()
    stockout_target = models.FloatField()
    overflow_target = models.FloatField()
    headline_risk = models.FloatField(null=True, blank=True)
    headline_span = models.CharField(max_length=60, blank=True)
    restored_from = models.PositiveIntegerField(null=True, blank=True)  # the version a restore copied

    class Meta:
        ordering = ["-number"]
        constraints = [
            models.UniqueConstraint(fields=["scenario", "number"], name="scenario_version_unique_number"),
            models.CheckConstraint(condition=Q(number__gte=1), name="scenario_version_number_positive"),
        ]

    def __str__(self) -> str:
        return f"{self.title} (version {self.number})"


class ShareRole(models.TextChoices):
    # planner/permissions.py says what each may do; the owner may do everything.
    VIEWER = "viewer", "can view"
    EDITOR = "editor", "can edit"


class ScenarioShare(models.Model):
    """A plan shared by its owner with one user or with everyone in one group, as viewer or editor."""

    scenario = models.ForeignKey(Scenario, on_delete=models.CASCADE, related_name="shares")
    user = models.ForeignKey(
        settings.AUTH_USER_MODEL, on_delete=models.CASCADE, null=True, blank=True, related_name="+"
    )
    group = models.ForeignKey("auth.Group", on_delete=models.CASCADE, null=True, blank=True, related_name="+")
    role = models.CharField(max_length=16, choices=ShareRole.choices, default=ShareRole.VIEWER)
    created = models.DateTimeField(auto_now_add=True)

    class Meta:
        ordering = ["id"]
        constraints = [
            models.CheckConstraint(
                condition=Q(user__isnull=False, group__isnull=True) | Q(user__isnull=True, group__isnull=False),
                name="scenario_share_one_user_or_group",
            ),
            models.CheckConstraint(condition=Q(role__in=ShareRole.values), name="scenario_share_role_known"),
            models.UniqueConstraint(
                fields=["scenario", "user"], condition=Q(user__isnull=False), name="scenario_share_unique_user"
            ),
            models.UniqueConstraint(
                fields=["scenario", "group"], condition=Q(group__isnull=False), name="scenario_share_unique_group"
            ),
        ]

    def __str__(self) -> str:
        return f"{self.scenario} shared with {self.user or self.group} ({self.get_role_display()})"


class ScenarioLink(models.Model):
    """A read-only link to a plan: whoever holds its token sees the plan, its charts and CSV tables, nothing else.

    Only the SHA-256 digest of the token is kept (planner/services.py makes the token and shows it once),
    so the database alone cannot open a plan.
    """

    scenario = models.ForeignKey(Scenario, on_delete=models.CASCADE, related_name="links")
    digest = models.CharField(max_length=64, unique=True)
    label = models.CharField(max_length=80, blank=True)
    created = models.DateTimeField(auto_now_add=True)
    expires = models.DateTimeField(null=True, blank=True)
    revoked = models.DateTimeField(null=True, blank=True)

    class Meta:
        ordering = ["-created", "-id"]

    def __str__(self) -> str:
        return f"read-only link to {self.scenario} ({self.label or 'no label'})"

    @staticmethod
    def digest_of(token: str) -> str:
        return hashlib.sha256(token.encode()).hexdigest()

    def is_open(self, now) -> bool:
        return self.revoked is None and (self.expires is None or self.expires > now)


class ApiToken(models.Model):
    """A personal token for the JSON API (``Authorization: Bearer <token>``): acts as its user, with their roles.

    Only the SHA-256 digest is kept; the token is shown once, when made (planner/services.py).
    """

    user = models.ForeignKey(settings.AUTH_USER_MODEL, on_delete=models.CASCADE, related_name="api_tokens")
    digest = models.CharField(max_length=64, unique=True)
    label = models.CharField(max_length=80, blank=True)
    created = models.DateTimeField(auto_now_add=True)
    revoked = models.DateTimeField(null=True, blank=True)

    class Meta:
        ordering = ["-created", "-id"]

    def __str__(self) -> str:
        return f"API token of {self.user} ({self.label or 'no label'})"


# Saved histories live in their own module; imported here so Django finds the model.
from planner.background.models import BackgroundReading  # noqa: E402, F401
from planner.history.models import SavedHistory  # noqa: E402, F401
from planner.portfolio.models import PortfolioChunk, PortfolioItem, PortfolioResult, PortfolioRun  # noqa: E402, F401
from planner.repairlog.models import SavedRepairLog  # noqa: E402, F401
