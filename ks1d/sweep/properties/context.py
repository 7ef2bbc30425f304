"""What one job's computation needs and records: its system, functional and settings, its solver calls.

A property function receives a :class:`Context` and asks it for energies;
the context picks the solver (radial atoms unless the settings or the call
say otherwise, the Gaussian solver for molecules and Gaussian atoms), makes
the call through :mod:`.calculations`, and records a summary of every call
(label, solver, species, charge, energy, convergence, …) so that each stored
number can be traced to the calculations behind it.
"""
from __future__ import annotations

from typing import Any

from ... import elements
from ...errors import CalculationError, InputError
from . import calculations
from .systems import System


class Context:
    """What a property computation needs and records: settings, calls made, details."""

    def __init__(self, system: System, functional: str, settings: dict[str, Any]):
        self.system = system
        self.functional = functional
        self.settings = settings
        self.calculations: list[dict[str, Any]] = []
        self.seconds: list[float] = []
        self.details: dict[str, Any] = {}

    def energy(self, label: str, system: System | None = None, charge: int | None = None,
               multiplicity: int | None = None, config: str | None = None, xyz: str | None = None,
               force_basis: bool = False, spin: str | None = None,
               atom_options: dict[str, Any] | None = None) -> dict[str, Any]:
        """One solver call; an exception leaving it names the step in ``exc.sweep_step``.

        ``spin`` and ``atom_options`` override the settings' radial spin
        treatment and solver options for this call only.
        """
        try:
            return self._energy(label, system, charge, multiplicity, config, xyz, force_basis, spin,
                                atom_options)
        except Exception as exc:
            name_step(exc, label)
            raise

    def _energy(self, label, system, charge, multiplicity, config, xyz, force_basis, spin=None,
                atom_options=None) -> dict[str, Any]:
        s = system or self.system
        q = s.charge if charge is None else charge
        st = self.settings
        if s.is_atom and elements.atomic_number(s.symbol) - q == 0:  # a bare nucleus, e.g. H+ in the IP of H
            summary = {"total_energy": 0.0, "converged": True, "iterations": 0, "homo_energy": None,
                       "configuration": "", "multiplicity": None, "error_estimate": 0.0,
                       "scf_last_change": 0.0}
            self.record({"label": label, "solver": "none (bare nucleus)", "species": s.symbol, "charge": q,
                         **summary}, 0.0)
            return summary
        radial = s.is_atom and xyz is None and not force_basis and st.get("atoms", "radial") == "radial"
        if radial:
            spin = spin or st.get("spin", "polarized")
            options = st.get("atom_options") if atom_options is None else atom_options
            summary, dt = calculations.atom(s.symbol, self.functional, charge=q, spin=spin,
                                            config=config, precision=st.get("precision", "normal"),
                                            options=options)
            record = {"label": label, "solver": "radial", "species": s.symbol, "charge": q, "config": config,
                      "spin": spin}
        else:
            if config is not None:
                raise InputError(f"{label}: a configuration can only be set for radial atoms")
            geom = xyz or s.geometry_xyz()
            if multiplicity is None:
                multiplicity = s.multiplicity_at(q)
            summary, dt = calculations.molecule(geom, self.functional, st["basis"], charge=q,
                                                multiplicity=multiplicity, options=st.get("molecule_options"))
            record = {"label": label, "solver": "gaussian", "species": s.name, "charge": q,
                      "multiplicity": multiplicity, "basis": st["basis"]}
        if not summary["converged"]:
            raise CalculationError(f"{label}: the SCF did not converge")
        record.update(summary)
        self.record(record, dt)
        return summary

    def bond_minimum(self, label: str, r_start: float, multiplicity: int) -> dict[str, Any]:
        """The minimum of E(R) of this diatomic from analytic gradients (:func:`.calculations.diatomic_minimum`).

        Every energy-and-gradient evaluation is recorded as one solver call, labelled
        ``"<label> at R = … A (energy and gradient)"`` (``"…, force constant)"`` for the two extra samples
        after a stalled SCF); an exception leaving it names the step.
        """
        s = self.system
        sym_a, sym_b = s.symbols
        basis = self.settings["basis"]
        try:
            summary, dt = calculations.diatomic_minimum(sym_a, sym_b, r_start, self.functional, basis, multiplicity,
                                                        options=self.settings.get("molecule_options"))
        except Exception as exc:
            name_step(exc, f"{label}: bond-length search")
            raise
        for point in summary["points"]:
            call = {k: v for k, v in point.items() if k != "seconds"}
            step = f"{label} at R = {point['r_angstrom']:.5f} A (energy and gradient"
            step += ")" if point["role"] == "search" else f", {point['role']})"
            self.record({"label": step, "solver": "gaussian", "species": s.name, "charge": s.charge,
                         "multiplicity": multiplicity, "basis": basis, **call}, point["seconds"] if dt else 0.0)
        if summary.get("stalled_scf"):
            tol = max(p["residual_tolerance"] for p in summary["points"])
            self.details.setdefault("relaxed_scf_steps", []).append(
                {"step": f"{label} bond-length search", "residual_tolerance": tol,
                 "note": summary["minimum"]["force_constant_from"]})
        return summary["minimum"]

    def record(self, call: dict[str, Any], seconds: float) -> None:
        """Add one solver call's summary (and the seconds it took) to the job's record."""
        self.calculations.append(call)
        self.seconds.append(seconds)

    def failed_step(self, step: str, exc: BaseException) -> None:
        """Note an optional step that failed (its quantity is left out) in ``details["failed_steps"]``."""
        self.details.setdefault("failed_steps", []).append({"step": step, "error": str(exc).splitlines()[0]})


def name_step(exc: BaseException, label: str) -> None:
    """Tag ``exc`` with the step it left (``exc.sweep_step``), unless an inner step already did."""
    if not hasattr(exc, "sweep_step"):
        exc.sweep_step = label  # type: ignore[attr-defined]
