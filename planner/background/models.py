"""One saved plan's figures worked out by a background worker (one row per plan version asked for)."""

from __future__ import annotations

from django.db import models
from django.db.models import Q


class WorkStatus(models.TextChoices):
    QUEUED = "queued", "Waiting for a worker"
    RUNNING = "running", "Working it out"
    DONE = "done", "Done"
    FAILED = "failed", "Stopped"
    CANCELLED = "cancelled", "Cancelled"


OPEN_WORK = (WorkStatus.QUEUED, WorkStatus.RUNNING)


class BackgroundReading(models.Model):
    scenario = models.ForeignKey("planner.Scenario", on_delete=models.CASCADE, related_name="background_readings")
    version = models.PositiveIntegerField()  # the plan's version this result belongs to
    status = models.CharField(max_length=10, choices=WorkStatus.choices, default=WorkStatus.QUEUED)
    units = models.BigIntegerField()  # the work priced by the engine's cost model (all parts allowed)
    units_done = models.BigIntegerField(default=0)  # of it, the parts the worker has finished
    attempts = models.PositiveIntegerField(default=0)
    heartbeat = models.DateTimeField(null=True, blank=True)  # last sign of life of the worker on it
    task_id = models.CharField(max_length=64, blank=True)  # the queue's task for its latest try
    created = models.DateTimeField(auto_now_add=True)
    started = models.DateTimeField(null=True, blank=True)  # the latest try's start
    finished = models.DateTimeField(null=True, blank=True)
    engine_seconds = models.FloatField(default=0.0)
    # The kind's result object, pickled and compressed. Written only by this project's workers; read back only
    # while the code that wrote it is the same (``code_mark``), so a changed result class is worked out again.
    result = models.BinaryField(null=True, blank=True)
    code_mark = models.CharField(max_length=64, blank=True)
    message = models.TextField(blank=True)  # why it stopped (failed or cancelled), in the analyst's words

    class Meta:
        ordering = ["-created", "-id"]
        constraints = [
            models.UniqueConstraint(fields=["scenario", "version"], name="background_reading_one_per_version"),
            models.CheckConstraint(condition=Q(status__in=WorkStatus.values), name="background_status_known"),
        ]

    def __str__(self) -> str:
        return f"background reading of plan {self.scenario_id} version {self.version}"

    @property
    def open(self) -> bool:
        return self.status in OPEN_WORK
