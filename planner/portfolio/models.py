"""A portfolio run: an uploaded table of items, split into chunks that background workers work out.

Rows are stored once at upload (``PortfolioItem``); a run, once started, hands
its good rows out in chunks (``PortfolioChunk``). A chunk goes through the queue
twice: first to be priced (every item through the engine's cost model; an item
over the cap is written as refused there, never queued for work), then to be
worked out (``planner.portfolio.tasks``). A chunk's
results (``PortfolioResult``, at most one per item: the database refuses a
second) are written in the same transaction that marks the chunk done, so a
chunk is either wholly written or not at all, and a chunk worked out twice
(its worker presumed dead, then finishing after all) is written once.
"""

from __future__ import annotations

from django.conf import settings
from django.contrib.auth.models import Group
from django.db import models
from django.db.models import Q
from django.urls import reverse


class RunStatus(models.TextChoices):
    READY = "ready", "Not started"
    QUEUED = "queued", "Waiting for a worker"
    RUNNING = "running", "Running"
    FINISHED = "finished", "Finished"
    CANCELLED = "cancelled", "Cancelled"
    FAILED = "failed", "Stopped: some items were not worked out"


OPEN_STATUSES = (RunStatus.QUEUED, RunStatus.RUNNING)


class ChunkStatus(models.TextChoices):
    WAITING = "waiting", "Waiting"
    RUNNING = "running", "Running"
    DONE = "done", "Done"
    FAILED = "failed", "Failed"
    CANCELLED = "cancelled", "Cancelled"


class ItemKind(models.TextChoices):
    STOCK = "stock", "Stock plan"
    REORDER = "reorder", "Reorder plan"
    SPARES = "spares", "Spares pool"


class PortfolioRun(models.Model):
    owner = models.ForeignKey(settings.AUTH_USER_MODEL, on_delete=models.CASCADE, related_name="portfolio_runs")
    title = models.CharField(max_length=120)
    file_name = models.CharField(max_length=255, blank=True)
    status = models.CharField(max_length=12, choices=RunStatus.choices, default=RunStatus.READY)
    rows = models.PositiveIntegerField(default=0)  # rows in the file
    refused = models.PositiveIntegerField(default=0)  # rows refused at upload (bad, or over the cap)
    queued = models.PositiveIntegerField(default=0)  # rows handed to workers
    created = models.DateTimeField(auto_now_add=True)
    started = models.DateTimeField(null=True, blank=True)
    finished = models.DateTimeField(null=True, blank=True)
    viewers = models.ManyToManyField(settings.AUTH_USER_MODEL, blank=True, related_name="portfolio_views")
    viewer_groups = models.ManyToManyField(Group, blank=True, related_name="portfolio_views")

    class Meta:
        ordering = ["-created", "-id"]
        constraints = [
            models.CheckConstraint(condition=~Q(title=""), name="portfolio_title_not_empty"),
            models.CheckConstraint(condition=Q(status__in=RunStatus.values), name="portfolio_status_known"),
        ]

    def __str__(self) -> str:
        return self.title

    def get_absolute_url(self) -> str:
        return reverse("portfolio_detail", args=[self.pk])


class PortfolioChunk(models.Model):
    run = models.ForeignKey(PortfolioRun, on_delete=models.CASCADE, related_name="chunks")
    number = models.PositiveIntegerField()
    status = models.CharField(max_length=10, choices=ChunkStatus.choices, default=ChunkStatus.WAITING)
    items = models.PositiveIntegerField(default=0)
    answered = models.PositiveIntegerField(default=0)
    unanswered = models.PositiveIntegerField(default=0)
    attempts = models.PositiveIntegerField(default=0)
    heartbeat = models.DateTimeField(null=True, blank=True)  # last sign of life of the worker on it
    priced = models.BooleanField(default=False)  # its items priced, those over the cap written as refused
    engine_seconds = models.FloatField(default=0.0)  # time inside the engine, for the benchmark
    task_id = models.CharField(max_length=64, blank=True)  # the queue's task for its latest try

    class Meta:
        ordering = ["run", "number"]
        constraints = [
            models.UniqueConstraint(fields=["run", "number"], name="portfolio_chunk_unique"),
            models.CheckConstraint(condition=Q(status__in=ChunkStatus.values), name="portfolio_chunk_status_known"),
        ]
        indexes = [models.Index(fields=["run", "status"], name="portfolio_chunk_run_status")]

    def __str__(self) -> str:
        return f"chunk {self.number} of run {self.run_id}"


class PortfolioItem(models.Model):
    run = models.ForeignKey(PortfolioRun, on_delete=models.CASCADE, related_name="items")
    row = models.PositiveIntegerField()  # the file's row, as a spreadsheet numbers it (header = 1)
    code = models.CharField(max_length=200, blank=True)
    description = models.CharField(max_length=200, blank=True)
    kind = models.CharField(max_length=8, choices=ItemKind.choices, blank=True)
    period = models.CharField(max_length=8, blank=True)
    spec = models.JSONField(null=True, blank=True)  # None for a refused row
    refusal = models.TextField(blank=True)  # why it is not worked out: a bad row in the file
    chunk = models.ForeignKey(PortfolioChunk, null=True, blank=True, on_delete=models.SET_NULL, related_name="+")

    class Meta:
        ordering = ["run", "row"]
        constraints = [models.UniqueConstraint(fields=["run", "row"], name="portfolio_item_row_unique")]
        indexes = [models.Index(fields=["chunk"], name="portfolio_item_chunk")]

    def __str__(self) -> str:
        return f"row {self.row} ({self.code})"


class PortfolioResult(models.Model):
    item = models.OneToOneField(PortfolioItem, primary_key=True, on_delete=models.CASCADE, related_name="result")
    run = models.ForeignKey(PortfolioRun, on_delete=models.CASCADE, related_name="results")
    answered = models.BooleanField()
    reason = models.TextField(blank=True)
    risk = models.FloatField(null=True)
    over_target = models.BooleanField(null=True)
    overflow = models.FloatField(null=True)
    smallest_start = models.BigIntegerField(null=True)
    smallest_capacity = models.BigIntegerField(null=True)
    reorder_point = models.BigIntegerField(null=True)
    safety_stock = models.FloatField(null=True)
    achieved = models.FloatField(null=True)
    normal_reorder_point = models.BigIntegerField(null=True)
    availability = models.FloatField(null=True)
    smallest_spares = models.BigIntegerField(null=True)

    class Meta:
        indexes = [models.Index(fields=["run", "over_target"], name="portfolio_result_over")]

    def __str__(self) -> str:
        return f"result of item {self.item_id}"
