"""Repair logs: a reliability engineer's record of failures and repairs in a pool, saved, fitted and made a plan.

Beside ``planner.history`` (records of stock), and like it not a scenario kind.
``models`` (the saved log), ``forms``, ``services`` (writes; a spares pool from
the fit through ``Kind.params_from_fit``), ``fit`` (the fit and the range of the
availability, priced before they run; no Django), ``pages``, ``views``,
``urls`` and ``demo``. Reading the file is ``planner.repairlog_file``. This
package never imports a kind.
"""
