"""The worker's task: work out one saved plan with the background budget and store the result.

The plan is priced again when the task starts (``reading.background_job``, with
``PLANNER_BACKGROUND_CAP``): a plan edited since, or a cap lowered since, is refused then with the
engine's reason. While the job runs, the worker stamps a heartbeat (``planner.heartbeat``) and records
each part the job reports done, which is also where a cancel stops it.
"""

from __future__ import annotations

import time

from django_tasks import task

from planner import reading
from planner.background import services
from planner.heartbeat import Heartbeat, tasks_taken_before
from planner.kinds import get_kind
from planner.models import Scenario


class _Stop(Exception):
    """The work was cancelled, or its claim passed to another worker, while this one ran it."""


def enqueue_work(work_id: int) -> None:
    services.work_mark_queued(work_id=work_id, task_id=work_out_plan.enqueue(work_id).id)


def watch(work) -> None:
    """Queue the work again if its worker died (the progress poll calls this)."""
    lost = bool(tasks_taken_before(work_out_plan, [work.task_id]))
    if services.work_requeue_stale(work=work, task_lost=lost):
        enqueue_work(work.pk)


@task()
def work_out_plan(work_id: int) -> dict:
    work = services.work_claim(work_id=work_id)
    if work is None:
        return {"work": work_id, "written": False}
    scenario = Scenario.objects.filter(pk=work.scenario_id).first()
    if scenario is None or scenario.version != work.version:
        services.work_fail(work_id=work_id, attempt=work.attempts, message="The plan was edited or deleted.")
        return {"work": work_id, "written": False}
    kind = get_kind(scenario.kind)
    began = time.perf_counter()
    try:
        job, allowed = reading.background_job(
            kind=kind,
            params=scenario.params,
            stockout_target=scenario.stockout_target,
            overflow_target=scenario.overflow_target,
        )
        job.on_part_done = _Progress(work_id, work.attempts, allowed)
        if not services.work_progress(
            work_id=work_id, attempt=work.attempts, units_done=0, units=sum(allowed.values())
        ):
            raise _Stop("priced")
        with Heartbeat(lambda: services.work_beat(work_id=work_id, attempt=work.attempts), f"plan work {work_id}"):
            result = job.run(allowed)
            headline = job.headline_of(result)
    except _Stop:
        return {"work": work_id, "written": False}
    except ValueError as refusal:  # the engine's own limits, ComputeTooLarge included: said in its words
        services.work_fail(work_id=work_id, attempt=work.attempts, message=str(refusal))
        return {"work": work_id, "written": False}
    written = services.work_finish(
        work_id=work_id,
        attempt=work.attempts,
        result=result,
        headline=headline,
        engine_seconds=time.perf_counter() - began,
    )
    return {"work": work_id, "written": written}


class _Progress:
    """Records each part the job reports done (its priced units) and stops the job when told to."""

    def __init__(self, work_id: int, attempt: int, allowed: dict[str, int]):
        self.work_id, self.attempt, self.allowed, self.done = work_id, attempt, allowed, 0

    def __call__(self, part: str) -> None:
        self.done += self.allowed.get(part, 0)
        if not services.work_progress(work_id=self.work_id, attempt=self.attempt, units_done=self.done):
            raise _Stop(part)
