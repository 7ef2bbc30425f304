"""A sweep's results as people read them: collected rows, error statistics, tables, plots, written files.

* :mod:`.collect`     stored jobs → one row per (system, quantity, functional) with its reference
* :mod:`.statistics`  MSE, MAE, RMS and maximum error per functional and quantity
* :mod:`.tables`      CSV, JSON and Markdown
* :mod:`.plots`       error distributions, parity plots, per-system bars (PNG, SVG)
* :mod:`.writers`     a store → :class:`~.writers.SweepReport` → files

The facts about each quantity (unit, titles, decimals) come from :mod:`ks1d.quantities`.
Nothing here runs a job or calls a solver (an import-linter contract checks this).
"""
