"""A saved repair log: the rows as the reader wrote them back, and the record's frame from the upload form.

The rows are kept as the reader's own CSV (``planner.repairlog_file.canonical_csv``)
and read again, with every check, whenever the log is shown or fitted.
"""

from __future__ import annotations

from django.conf import settings
from django.db import models
from django.db.models import Q
from django.urls import reverse

from planner.repairlog_file import MAX_POOL, RepairLog, read_canonical


class LogTimeUnit(models.TextChoices):
    DAY = "day", "Days"
    HOUR = "hour", "Hours"


class SavedRepairLog(models.Model):
    owner = models.ForeignKey(settings.AUTH_USER_MODEL, on_delete=models.CASCADE, related_name="repair_logs")
    title = models.CharField(max_length=120)
    notes = models.TextField(blank=True)
    file_name = models.CharField(max_length=255, blank=True)
    time_unit = models.CharField(max_length=8, choices=LogTimeUnit.choices)
    record_start = models.CharField(max_length=20)
    record_end = models.CharField(max_length=20)
    units = models.PositiveIntegerField()
    spares = models.PositiveIntegerField()
    failures = models.PositiveIntegerField()
    rows = models.TextField()  # "unit,failed,returned" then one line a failure
    created = models.DateTimeField(auto_now_add=True)
    updated = models.DateTimeField(auto_now=True)

    class Meta:
        ordering = ["-updated", "-id"]
        indexes = [models.Index(fields=["owner", "-updated"], name="repairlog_owner_updated")]
        constraints = [
            models.CheckConstraint(condition=~Q(title=""), name="repairlog_title_not_empty"),
            models.CheckConstraint(condition=Q(time_unit__in=LogTimeUnit.values), name="repairlog_time_unit_known"),
            models.CheckConstraint(condition=Q(units__gte=1), name="repairlog_units_at_least_one"),
            models.CheckConstraint(
                condition=Q(units__lte=MAX_POOL - models.F("spares")), name="repairlog_pool_in_range"
            ),
        ]

    def __str__(self) -> str:
        return self.title

    def get_absolute_url(self) -> str:
        return reverse("repairlog_detail", args=[self.pk])

    def frame(self) -> dict:
        """The upload form's values the reader needs beside the rows."""
        return {
            "time_unit": self.time_unit,
            "record_start": self.record_start,
            "record_end": self.record_end,
            "units": self.units,
            "spares": self.spares,
        }

    def parsed(self) -> RepairLog:
        """The log as the reader returns it; RepairLogError if a saved row no longer reads (not expected)."""
        return read_canonical(self.rows, **self.frame())
