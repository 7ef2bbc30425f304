"""Molecules in a Gaussian basis: ks1d's own grid, guess, density assembly and SCF.

Modules (data flows top to bottom):

* :mod:`.geometry`    XYZ parsing and validation (Å in, bohr inside)
* :mod:`.basis`       basis by name / per-element mapping / file; electron counts
* :mod:`.grid`        Treutler–Ahlrichs radial × Lebedev rules, Becke partition, levels
* :mod:`.density`     AO values → ρ, ∇ρ, τ → E_xc and V_xc matrices (screened blocks)
* :mod:`.coulomb`     exact J/K (integral-direct) and fitted J for early iterations
* :mod:`.guess`       superposed potentials of ks1d's radial atoms
* :mod:`.occupations` aufbau and Fermi–Dirac occupations
* :mod:`.scf`         the RKS/UKS loop, :func:`solve_molecule`
* :mod:`.gradient`    analytic nuclear gradient (derivative integrals, XC with grid response)
* :mod:`.result`      frozen result dataclasses
* :mod:`.parallel`    BLAS threading control for the grid loops

pyscf provides basis-set data, Gaussian integrals, J/K contractions, AO
values on points and the Lebedev tables; libxc provides functional values.
"""
