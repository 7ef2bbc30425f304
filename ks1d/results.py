"""The vocabulary both solvers share: energy components, SCF options, spin words.

Every solver result (:class:`ks1d.radial.result.AtomResult`,
:class:`ks1d.gaussian.result.MoleculeResult`) carries the same core fields:

=================  ============================================================
``total_energy``   hartree
``components``     :class:`EnergyComponents`
``converged``      bool; ``iterations``: int; ``history``: one
                   :class:`~ks1d.errors.IterationRecord` per SCF iteration
``spin``           ``"restricted"`` or ``"polarized"`` (see :data:`SPIN_TREATMENTS`)
``multiplicity``   2S + 1 with S = ½|N_α − N_β| (fractional for fractional occupations)
``n_alpha``,       electrons of each spin
``n_beta``
``functional``     the resolved functional (:meth:`ks1d.xc.Functional.to_dict`)
``warnings``       tuple of sentences
``error_estimate`` hartree: estimated numerical error of ``total_energy`` for the
                   stated model (mesh or grid, plus the last SCF energy change);
                   ``None`` when not estimated
``version``        the ks1d version that produced it
``settings``       every setting that shaped the number (including the resolved
                   :class:`SCFOptions`)
``timings``        seconds per stage
``to_dict()``      strict JSON (non-finite numbers become ``null``)
=================  ============================================================

Orbital spin channels are named ``"alpha"``, ``"beta"`` or ``"both"`` (a
spin-restricted orbital holding both spins) in both solvers.
"""
from __future__ import annotations

from dataclasses import dataclass, fields, replace

from .errors import SettingsError

#: The two spin treatments, in the words both solvers use for results and input.
SPIN_TREATMENTS = ("restricted", "polarized")
#: Names of orbital spin channels.
SPIN_CHANNELS = ("alpha", "beta", "both")


@dataclass(frozen=True)
class EnergyComponents:
    """Parts of the total energy (hartree).

    total = kinetic + nuclear_attraction + coulomb + exchange_correlation
            + exact_exchange + nuclear_repulsion

    ``coulomb`` is the classical electron–electron (Hartree) energy ½∫∫ρρ′/|r − r′|
    (for open shells under exact exchange it includes the configuration-average
    correction of the radial solver); ``exchange_correlation`` the semilocal part;
    ``exact_exchange`` the Fock-exchange part of hybrids and HF; ``nuclear_repulsion``
    is zero for a single atom.
    """

    kinetic: float
    nuclear_attraction: float
    coulomb: float
    exchange_correlation: float
    exact_exchange: float
    nuclear_repulsion: float = 0.0

    @property
    def total(self) -> float:
        return (self.kinetic + self.nuclear_attraction + self.coulomb + self.exchange_correlation
                + self.exact_exchange + self.nuclear_repulsion)

    @property
    def potential(self) -> float:
        """Every term but the kinetic energy (for the virial ratio −V/T)."""
        return self.total - self.kinetic

    def __getitem__(self, name: str) -> float:
        """``components["kinetic"]`` works like ``components.kinetic``."""
        if name not in self.names():
            raise KeyError(f"{name!r} is not an energy component; components are {', '.join(self.names())}")
        return getattr(self, name)

    @classmethod
    def names(cls) -> tuple[str, ...]:
        return tuple(f.name for f in fields(cls))

    def items(self):
        return ((n, getattr(self, n)) for n in self.names())

    def to_dict(self) -> dict[str, float]:
        return {n: float(v) for n, v in self.items()}


@dataclass(frozen=True)
class SCFOptions:
    """Convergence and stabilisation settings of either SCF; one name per idea.

    ``None`` means "the solver's default" (:data:`ks1d.radial.scf.ATOM_SCF_DEFAULTS`,
    :data:`ks1d.gaussian.scf.MOLECULE_SCF_DEFAULTS`); the result's
    ``settings["scf"]`` records the resolved values.

    max_iterations      SCF iterations before giving up (ConvergenceError with the history)
    energy_tolerance    |ΔE| between iterations, hartree
    residual_tolerance  the residual the SCF drives to zero: ∫|ρ_out − ρ_in| d³r (electrons)
                        for atoms; max |Xᵀ(FDS − SDF)X| (hartree) for molecules
    damping             fraction of the previous input kept in a step, in [0, 1): 0 = no
                        damping.  Atoms: the Pulay/Anderson step is x + (1 − damping) r.
                        Molecules: F_in ← (1 − damping) F_in + damping F_in,previous while the
                        orbital gradient is above 1e-3
    history             length of the Pulay/DIIS subspace
    level_shift         virtual-orbital level shift, hartree (molecules only)
    smearing            Fermi–Dirac width, hartree; 0 = aufbau occupations (molecules only;
                        atoms take fixed, possibly fractional, occupations from the configuration)
    """

    max_iterations: int | None = None
    energy_tolerance: float | None = None
    residual_tolerance: float | None = None
    damping: float | None = None
    history: int | None = None
    level_shift: float | None = None
    smearing: float | None = None

    def __post_init__(self):
        if self.max_iterations is not None and (int(self.max_iterations) != self.max_iterations
                                                or self.max_iterations < 1):
            raise SettingsError(f"max_iterations must be a positive integer, got {self.max_iterations}")
        for name in ("energy_tolerance", "residual_tolerance"):
            v = getattr(self, name)
            if v is not None and not (_finite(v) and v > 0):
                raise SettingsError(f"{name} must be a positive number, got {v}")
        if self.damping is not None and not (_finite(self.damping) and 0 <= self.damping < 1):
            raise SettingsError(f"damping must lie in [0, 1) (the fraction of the previous input kept), "
                                f"got {self.damping}")
        if self.history is not None and (int(self.history) != self.history or self.history < 2):
            raise SettingsError(f"history (the Pulay/DIIS subspace length) must be an integer ≥ 2, got {self.history}")
        for name in ("level_shift", "smearing"):
            v = getattr(self, name)
            if v is not None and not (_finite(v) and v >= 0):
                raise SettingsError(f"{name} must be ≥ 0 hartree, got {v}")

    @classmethod
    def coerce(cls, value) -> SCFOptions:
        """An SCFOptions from None, an SCFOptions or a mapping of its field names."""
        if value is None:
            return cls()
        if isinstance(value, cls):
            return value
        if isinstance(value, dict):
            unknown = sorted(set(value) - set(cls.names()))
            if unknown:
                raise SettingsError(f"unknown SCF option(s) {', '.join(map(repr, unknown))}; "
                                    f"the options are {', '.join(cls.names())}")
            return cls(**value)
        raise SettingsError(f"SCF options must be an SCFOptions or a mapping, got {type(value).__name__}")

    @classmethod
    def names(cls) -> tuple[str, ...]:
        return tuple(f.name for f in fields(cls))

    def resolved(self, defaults: SCFOptions, solver: str, unsupported: tuple[str, ...] = ()) -> SCFOptions:
        """Fill unset fields from ``defaults``; refuse options the ``solver`` does not have."""
        for name in unsupported:
            v = getattr(self, name)
            if v is not None and v != 0:
                raise SettingsError(f"the {solver} has no {name.replace('_', ' ')} option "
                                    f"(it applies to the Gaussian solver only)")
        return replace(defaults, **{n: v for n, v in self.to_dict().items() if v is not None})

    def to_dict(self) -> dict:
        return {n: getattr(self, n) for n in self.names()}


def _finite(v) -> bool:
    try:
        return float(v) == float(v) and abs(float(v)) != float("inf")
    except (TypeError, ValueError):
        return False


def multiplicity_of(n_alpha: float, n_beta: float) -> float:
    """2S + 1 with S = ½|N_α − N_β| (an integer for integer occupations)."""
    m = abs(float(n_alpha) - float(n_beta)) + 1.0
    return int(round(m)) if abs(m - round(m)) < 1e-9 else m


def split_scf_options(options: dict | None) -> tuple[dict, dict]:
    """Split a flat options mapping into (SCFOptions fields, other solver keywords).

    Sweep specs and validation helpers carry one flat table per solver, e.g.
    ``{"grid": "fine", "smearing": 1e-3}``; the SCF part goes to ``scf=``.
    """
    opts = dict(options or {})
    nested = opts.pop("scf", None) or {}
    if isinstance(nested, SCFOptions):
        nested = {k: v for k, v in nested.to_dict().items() if v is not None}
    scf = dict(nested)
    for name in SCFOptions.names():
        if name in opts:
            scf[name] = opts.pop(name)
    return scf, opts
