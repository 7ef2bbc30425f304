"""The physics of a sweep: systems, datasets, solver calls and the job kinds computing derived properties.

* :mod:`.kinds`      the declarations: each job kind's quantities, settings, suitable systems, solvers, cost
* :mod:`.registry`   the kinds' computations and :data:`~.registry.REGISTRY`, the registry the engine runs
* :mod:`.checks`     up-front checks of planned jobs (functionals, bases, solver/functional pairs)
* :mod:`.basic`      total energy, IP, EA, atomization energy, −ε_HOMO, spin splitting, s→d promotion
* :mod:`.diatomic`   energy scans: r_e, ω_e and D_0 of diatomics
* :mod:`.atom_survey`  the report's atomic battery (one job, several quantities) and basis-set errors
* :mod:`.reference_energies`  reference atomic energies (``ks1d refs``)
* :mod:`.context`, :mod:`.calculations`  one job's solver calls: recorded, memoised, summarised
* :mod:`.systems`, :mod:`.datasets`, :mod:`.configurations`, :mod:`.curvefit`  the pieces they use

Nothing here imports :mod:`ks1d.sweep.output` or the spec; the engine imports nothing here.
"""
