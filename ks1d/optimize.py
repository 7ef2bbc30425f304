"""Geometry optimisation of molecules on ks1d's analytic Kohn–Sham gradients.

The steps are taken by geomeTRIC (L.-P. Wang and C. Song, J. Chem. Phys. 144,
214108 (2016)), a well-kept optimiser from the package index, in its
translation–rotation internal coordinates (TRIC) with a BFGS Hessian update and
a trust radius.  ks1d supplies the energy and the analytic gradient
(:mod:`ks1d.gaussian.gradient`, grid response included), and restarts every SCF
from the converged density of the previous step.

Convergence: all of max|g| < ``max_force`` (4.5e-4 Ha/bohr by default), rms g <
``rms_force`` (3e-4), max step < ``max_step`` (1.8e-3 bohr), rms step <
``rms_step`` (1.2e-3 bohr) and |ΔE| < ``energy_change`` (1e-6 Ha) — the
criteria in common practice for molecular optimisations, and geomeTRIC's defaults.
"""
from __future__ import annotations

import logging
import tempfile
import time
from contextlib import contextmanager
from dataclasses import dataclass

import numpy as np

from ._version import __version__
from .errors import CalculationError, GeometryError, SettingsError
from .serialize import plain
from .units import BOHR_TO_ANGSTROM

#: convergence criteria (hartree, bohr) in common practice; geomeTRIC's defaults
DEFAULT_CRITERIA = {"max_force": 4.5e-4, "rms_force": 3.0e-4, "max_step": 1.8e-3, "rms_step": 1.2e-3,
                    "energy_change": 1.0e-6}
_GEOMETRIC_NAMES = {"max_force": "convergence_gmax", "rms_force": "convergence_grms",
                    "max_step": "convergence_dmax", "rms_step": "convergence_drms",
                    "energy_change": "convergence_energy"}
#: the internal-coordinate systems geomeTRIC offers that ks1d exposes
COORDINATE_SYSTEMS = ("tric", "dlc", "prim", "cart")


class OptimizationError(CalculationError):
    """The geometry optimisation stopped before meeting its criteria.

    ``history`` holds one :class:`OptimizationStep` per gradient evaluation and ``geometry``
    the XYZ text (Å) of the last evaluated structure, so no finished work is lost.
    """

    def __init__(self, message: str, history=(), geometry: str | None = None):
        self.history = tuple(history)
        self.geometry = geometry
        lines = [message]
        if self.history:
            lines.append("last steps (energy / hartree, max force / Ha/bohr, step / bohr):")
            for s in self.history[-6:]:
                lines.append(f"  {s.iteration:4d}  {s.energy:+.10f}  {s.max_force:.2e}  {s.step:.2e}")
        super().__init__("\n".join(lines))


@dataclass(frozen=True)
class OptimizationStep:
    """One gradient evaluation: energy (Ha), max and rms |∂E/∂R| (Ha/bohr), the step that led here
    (max atomic displacement, bohr; 0 for the start) and the SCF iterations it took."""

    iteration: int
    energy: float
    max_force: float
    rms_force: float
    step: float
    scf_iterations: int

    def to_dict(self) -> dict:
        return plain({"iteration": self.iteration, "energy": self.energy, "max_force": self.max_force,
                      "rms_force": self.rms_force, "step": self.step, "scf_iterations": self.scf_iterations})


@dataclass(frozen=True)
class OptimizationResult:
    """Outcome of :func:`optimize_molecule`.

    ``geometry`` is the optimised structure as XYZ text (Å); ``total_energy`` its energy (Ha);
    ``history`` one :class:`OptimizationStep` per gradient evaluation; ``result`` the final
    :class:`~ks1d.gaussian.result.MoleculeResult` (with its gradient).
    """

    geometry: str
    total_energy: float
    converged: bool
    iterations: int
    history: tuple
    result: object
    criteria: dict
    settings: dict
    version: str
    timings: dict

    @property
    def max_force(self) -> float:
        """max |∂E/∂R_A| at the final geometry, Ha/bohr."""
        return float(np.abs(self.result.gradient).max())

    def to_dict(self) -> dict:
        return plain({"geometry": self.geometry, "total_energy": self.total_energy, "converged": self.converged,
                      "iterations": self.iterations, "history": [s.to_dict() for s in self.history],
                      "result": self.result.to_dict(), "criteria": self.criteria, "settings": self.settings,
                      "version": self.version, "timings": self.timings})


def xyz_text(symbols, coordinates_bohr: np.ndarray, comment: str = "") -> str:
    """XYZ text (Å) of atoms given in bohr."""
    lines = [str(len(symbols)), comment.replace("\n", " ")]
    for sym, (x, y, z) in zip(symbols, np.asarray(coordinates_bohr) * BOHR_TO_ANGSTROM):
        lines.append(f"{sym:<3}{x:16.10f}{y:16.10f}{z:16.10f}")
    return "\n".join(lines) + "\n"


def _criteria(overrides: dict | None) -> dict:
    crit = dict(DEFAULT_CRITERIA)
    for key, value in (overrides or {}).items():
        if key not in DEFAULT_CRITERIA:
            raise SettingsError(f"unknown convergence criterion {key!r}; the criteria are "
                                f"{', '.join(DEFAULT_CRITERIA)}")
        try:
            v = float(value)
        except (TypeError, ValueError):
            raise SettingsError(f"convergence criterion {key} must be a number, got {value!r}") from None
        if not (v > 0 and np.isfinite(v)):
            raise SettingsError(f"convergence criterion {key} must be a positive number, got {value}")
        crit[key] = v
    return crit


@contextmanager
def _quiet_optimizer():
    """geomeTRIC reports through the logging module; keep its INFO chatter out of ks1d's output."""
    log = logging.getLogger("geometric")
    level, propagate = log.level, log.propagate
    log.setLevel(logging.ERROR)
    try:
        yield
    finally:
        log.setLevel(level)
        log.propagate = propagate


def optimize_molecule(geometry, basis="def2-svp", xc="pbe", charge: int = 0, multiplicity: int = 1, *,
                      spin: str | None = None, grid="default", scf=None, criteria: dict | None = None,
                      max_steps: int = 100, coordinates: str = "tric", trust_radius: float = 0.1,
                      progress=None, **solver_options) -> OptimizationResult:
    """Minimise the Kohn–Sham energy of a molecule with respect to its nuclear positions.

    geometry, basis, xc, charge, multiplicity, spin, grid, scf: as for
    :func:`ks1d.gaussian.scf.solve_molecule` (extra keywords go there too).
    criteria: overrides of :data:`DEFAULT_CRITERIA` (``max_force``, ``rms_force`` in Ha/bohr;
    ``max_step``, ``rms_step`` in bohr; ``energy_change`` in Ha).
    max_steps: optimisation steps (geometry updates) before giving up; the gradient is evaluated
    at most ``max_steps + 1`` times (the start and one per step); coordinates: geomeTRIC's coordinate
    system ("tric" translation–rotation internal coordinates, "dlc", "prim" or "cart");
    trust_radius: initial trust radius (bohr).
    progress(step): called with each :class:`OptimizationStep`.
    Raises :class:`OptimizationError` (with the history and the last geometry) if the criteria
    are not met within ``max_steps``.
    """
    from geometric.engine import Engine
    from geometric.errors import GeomOptNotConvergedError
    from geometric.internal import CartesianCoordinates, DelocalizedInternalCoordinates, PrimitiveInternalCoordinates
    from geometric.molecule import Molecule
    from geometric.optimize import Optimize
    from geometric.params import OptParams

    from .gaussian.geometry import Geometry, read_geometry
    from .gaussian.scf import solve_molecule

    t0 = time.perf_counter()
    geom = read_geometry(geometry)
    if geom.natom < 2:
        raise GeometryError(f"a single atom ({geom.symbols[0]}) has no geometry to optimise; "
                            "use solve_molecule (or ks1d atom) for its energy")
    crit = _criteria(criteria)
    if int(max_steps) != max_steps or max_steps < 1:
        raise SettingsError(f"max_steps must be a positive integer, got {max_steps}")
    key = str(coordinates).strip().lower()
    if key not in COORDINATE_SYSTEMS:
        raise SettingsError(f"unknown coordinate system {coordinates!r}; choose one of {', '.join(COORDINATE_SYSTEMS)}")
    if not (np.isfinite(trust_radius) and trust_radius > 0):
        raise SettingsError(f"trust_radius must be a positive number of bohr, got {trust_radius}")
    unknown = set(solver_options) - {"guess", "ao_cache_mb", "coulomb_fitting", "fit_switch"}
    if unknown:
        raise SettingsError(f"unknown option(s) {', '.join(sorted(map(repr, unknown)))} for optimize_molecule")

    def solve(g, start):
        # per-step energies: no grid-error evaluation (it would cost a fine-grid E_xc per step)
        return solve_molecule(g, basis=basis, xc=xc, charge=charge, multiplicity=multiplicity, spin=spin,
                              grid=grid, scf=scf, gradient=True, start=start,
                              estimate_grid_error=False, **solver_options)

    history: list[OptimizationStep] = []
    last = {"result": None, "coords": None, "best": None}

    class _Ks1dEngine(Engine):
        def calc_new(self, coords, dirname):
            X = np.asarray(coords, dtype=float).reshape(-1, 3)
            g = Geometry(geom.symbols, geom.numbers, X, geom.comment)
            res = solve(g, last["result"])
            grad = np.asarray(res.gradient)
            step = 0.0 if last["coords"] is None else float(np.linalg.norm(X - last["coords"], axis=1).max())
            rec = OptimizationStep(len(history) + 1, float(res.total_energy), float(np.abs(grad).max()),
                                   float(np.sqrt(np.mean(grad**2))), step, int(res.iterations))
            history.append(rec)
            last["result"], last["coords"] = res, X
            if progress is not None:
                progress(rec)
            return {"energy": float(res.total_energy), "gradient": grad.ravel().copy()}

    M = Molecule()
    M.elem = list(geom.symbols)
    M.xyzs = [geom.coordinates * BOHR_TO_ANGSTROM]
    M.build_topology()
    engine = _Ks1dEngine(M)
    params = OptParams(maxiter=int(max_steps), trust=float(trust_radius),
                       **{_GEOMETRIC_NAMES[k]: v for k, v in crit.items()})
    coord_class, connect, addcart = {"tric": (DelocalizedInternalCoordinates, False, False),
                                     "dlc": (DelocalizedInternalCoordinates, True, False),
                                     "prim": (PrimitiveInternalCoordinates, True, False),
                                     "cart": (CartesianCoordinates, False, False)}[key]
    converged = True
    with _quiet_optimizer(), tempfile.TemporaryDirectory(prefix="ks1d-opt-") as tmp:
        IC = coord_class(M, build=True, connect=connect, addcart=addcart)
        try:
            Optimize(geom.coordinates.ravel().copy(), M, IC, engine, tmp, params, print_info=False)
        except GeomOptNotConvergedError:
            converged = False
    res = last["result"]
    label = "optimised geometry" if converged else "last geometry of an unconverged optimisation"
    final_xyz = xyz_text(geom.symbols, last["coords"], f"ks1d {label}: {xc}/{basis}, "
                                                       f"E = {res.total_energy:.10f} Ha")
    if not converged:
        raise OptimizationError(
            f"geometry optimisation did not meet the criteria in {max_steps} steps "
            f"(max force {history[-1].max_force:.2e} Ha/bohr, criterion {crit['max_force']:.1e}); "
            "raise max_steps (--max-steps), start from a better structure, or try coordinates='cart'",
            history, final_xyz)
    settings = {"optimizer": "geomeTRIC", "coordinates": key, "trust_radius": float(trust_radius),
                "max_steps": int(max_steps), "solver": res.settings}
    return OptimizationResult(geometry=final_xyz, total_energy=float(res.total_energy), converged=True,
                              iterations=len(history), history=tuple(history), result=res, criteria=crit,
                              settings=settings, version=__version__,
                              timings={"total": time.perf_counter() - t0,
                                       "scf_iterations": int(sum(s.scf_iterations for s in history))})
