"""The sweep engine: jobs, the results store, executors, the worker, the runner and the progress line.

It knows nothing of physics.  A job names a *kind* and carries an opaque
*system* object; what a kind computes, how a system is rebuilt from its dict
and what a job costs come from the registry the engine is given
(:class:`ks1d.sweep.engine.registry.Registry`).  Worker processes find that
registry by its name (``"module:attribute"``), so the engine imports no
property code, and the process pool and Dask run exactly what runs in-process.
"""
