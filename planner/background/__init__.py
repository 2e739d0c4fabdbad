"""Saved plans too large for one page request, worked out by a background worker instead.

A plan over ``PLANNER_COMPUTE_CAP`` but within ``PLANNER_BACKGROUND_CAP`` is not refused: its
results page (or its save) queues one ``BackgroundReading`` for the plan's current version on the
portfolio runs' queue, shows a progress bar (the same as a portfolio run's) and fills in when a
worker has stored the result. ``models.py`` the stored work, ``services.py`` the writes and the
reading of a stored result, ``tasks.py`` the worker's task, ``views.py`` the progress, cancel and
start-again endpoints.
"""
