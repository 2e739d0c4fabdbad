"""Portfolio runs: a table of items uploaded at once, worked out by background workers in chunks.

Not a scenario kind: a run holds many items of the three kinds the engine's
``walkmath.portfolio`` answers (stock, reorder, spares). ``items_file``
(reading the upload; no Django models), ``items`` (stored specs to the
engine's items, their prices and the figures stored), ``models``, ``upload``
(the size check before the body is read), ``services`` (writes, and the
workers' claim and finish), ``tasks`` (the background tasks and the lease),
``permissions``, ``tables`` (the results table and its CSV), ``charts``,
``views`` and ``urls``; templates in ``templates/portfolio/``.
"""
