"""A saved history: the whole series as it was read, owned by one user.

The dates are not stored one by one: the reader guarantees one row per
period with no gaps, so the first date and the period give them all.
"""

from __future__ import annotations

import datetime

import numpy as np
from django.conf import settings
from django.core.exceptions import ValidationError
from django.db import models
from django.db.models import Q
from django.urls import reverse

from planner.history_file import MAX_ROWS, PERIODS, History


class HistoryShape(models.TextChoices):
    LEVELS = "levels", "Stock levels"
    MOVEMENTS = "movements", "Units in and out"


class HistoryPeriod(models.TextChoices):
    DAY = "day", "Day"
    WEEK = "week", "Week"


# The columns each shape keeps, in the order they are stored.
SERIES = {HistoryShape.LEVELS: ("level",), HistoryShape.MOVEMENTS: ("in", "out")}


class SavedHistory(models.Model):
    owner = models.ForeignKey(settings.AUTH_USER_MODEL, on_delete=models.CASCADE, related_name="histories")
    title = models.CharField(max_length=120)
    notes = models.TextField(blank=True)
    file_name = models.CharField(max_length=255, blank=True)
    period = models.CharField(max_length=8, choices=HistoryPeriod.choices)
    shape = models.CharField(max_length=12, choices=HistoryShape.choices)
    first_date = models.DateField()
    rows = models.PositiveIntegerField()
    # {"level": [...]} or {"in": [...], "out": [...]}: one whole number per row, in date order.
    series = models.JSONField()
    created = models.DateTimeField(auto_now_add=True)
    updated = models.DateTimeField(auto_now=True)

    class Meta:
        ordering = ["-updated", "-id"]
        verbose_name_plural = "saved histories"
        indexes = [models.Index(fields=["owner", "-updated"], name="history_owner_updated")]
        constraints = [
            models.CheckConstraint(condition=~Q(title=""), name="history_title_not_empty"),
            models.CheckConstraint(condition=Q(period__in=HistoryPeriod.values), name="history_period_known"),
            models.CheckConstraint(condition=Q(shape__in=HistoryShape.values), name="history_shape_known"),
            models.CheckConstraint(condition=Q(rows__gte=1, rows__lte=MAX_ROWS), name="history_rows_in_range"),
        ]

    def __str__(self) -> str:
        return self.title

    def get_absolute_url(self) -> str:
        return reverse("history_detail", args=[self.pk])

    def clean(self) -> None:
        columns = SERIES.get(self.shape, ())
        if not isinstance(self.series, dict) or set(self.series) != set(columns):
            raise ValidationError({"series": f"series must hold the columns {', '.join(columns)}"})
        for column in columns:
            values = self.series[column]
            if len(values) != self.rows or not all(type(value) is int for value in values):
                raise ValidationError({"series": f"column {column} must hold {self.rows} whole numbers"})

    @property
    def last_date(self) -> datetime.date:
        return self.first_date + datetime.timedelta(days=PERIODS[self.period] * (self.rows - 1))

    def parsed(self) -> History:
        """The history as the reader returns it (``planner.history_file.History``); no query."""
        step = PERIODS[self.period]
        dates = tuple(self.first_date + datetime.timedelta(days=step * i) for i in range(self.rows))
        rows = tuple(range(2, self.rows + 2))
        arrays = {column: np.array(values, dtype=np.int64) for column, values in self.series.items()}
        if self.shape == HistoryShape.LEVELS:
            return History(self.shape, self.period, dates, rows, levels=arrays["level"])
        return History(self.shape, self.period, dates, rows, arrivals=arrays["in"], demand=arrays["out"])
