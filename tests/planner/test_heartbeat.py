"""The time left a progress bar shows (``planner.heartbeat.seconds_left``): the pace so far, carried on."""

import datetime

from django.utils import timezone

from planner.heartbeat import seconds_left


def test_the_time_left_carries_the_pace_so_far_on(monkeypatch):
    now = timezone.now()
    monkeypatch.setattr(timezone, "now", lambda: now)
    ten_seconds_ago = now - datetime.timedelta(seconds=10)
    # A quarter done in 10 s: three quarters left at that pace take 30 s (rule of three).
    assert seconds_left(ten_seconds_ago, 25, 100) == 30.0
    assert seconds_left(ten_seconds_ago, 1, 3) == 20.0


def test_no_time_left_is_shown_before_a_pace_or_once_all_is_done():
    started = timezone.now() - datetime.timedelta(seconds=10)
    assert seconds_left(None, 5, 10) is None  # not started
    assert seconds_left(started, 0, 10) is None  # nothing done yet: no pace
    assert seconds_left(started, 10, 10) is None  # all done
