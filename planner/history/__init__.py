"""Histories: an analyst's record of stock levels or of units in and out, saved, fitted and turned into plans.

Not a scenario kind: a history is data a plan can be made from. ``models``
(the saved history), ``upload`` (reading an upload within its size limit),
``forms``, ``services`` (writes), ``fit`` (the fit and the credible range of
the risk, priced before they run; no Django), ``charts``, ``tables`` (CSV
rows), ``views`` and ``urls``. A kind makes a plan from a fit through
``Kind.params_from_fit`` (planner/kinds/__init__.py); this package never
imports a kind.
"""
