"""Exchange-correlation functionals: names, kinds and evaluation on points.

Functional values and derivatives come from libxc through the copy that
pyscf ships (:mod:`pyscf.dft.libxc`); this module only resolves names,
classifies the functional and converts between ks1d's array layout and
libxc's.

Array layout used by both solvers (``ns`` = 1 spin-restricted, 2 polarized):

* ``rho``   shape ``(ns, N)``      spin densities (total density when ns = 1)
* ``grad``  shape ``(ns, 3, N)``   Cartesian density gradients (GGA and up)
* ``tau``   shape ``(ns, N)``      kinetic-energy densities τ_σ = ½ Σ_i |∇ψ_iσ|²

:func:`evaluate_xc` returns the energy per volume ``e`` (so E_xc = ∫ e d³r)
and the partial derivatives ∂e/∂ρ_σ, ∂e/∂σ_στ (σ_uu, σ_ud, σ_dd; or σ for
ns = 1) and ∂e/∂τ_σ.
"""
from __future__ import annotations

import difflib
from dataclasses import dataclass
from functools import cache, lru_cache

import numpy as np

from .errors import UnknownFunctional, UnsupportedFunctional

#: ks1d's short names.  Every alias expands to libxc identifiers; "lda" is
#: Slater exchange + VWN5 correlation (libxc ``lda_c_vwn``), the combination
#: used by the NIST atomic reference tables (Kotochigova et al., PRA 55, 191
#: (1997)).  "b3lyp" follows libxc's definition (VWN-RPA, i.e. VWN3-like
#: correlation); "b3lyp5" uses VWN5.
ALIASES: dict[str, str] = {
    "lda": "lda_x,lda_c_vwn",
    "svwn5": "lda_x,lda_c_vwn",
    "lsda": "lda_x,lda_c_vwn",
    "svwn3": "lda_x,lda_c_vwn_rpa",
    "lda_pw": "lda_x,lda_c_pw",
    "lda_pz": "lda_x,lda_c_pz",
    "slater": "lda_x",
    "pbe": "gga_x_pbe,gga_c_pbe",
    "pbesol": "gga_x_pbe_sol,gga_c_pbe_sol",
    "revpbe": "gga_x_pbe_r,gga_c_pbe",
    "rpbe": "gga_x_rpbe,gga_c_pbe",
    "blyp": "gga_x_b88,gga_c_lyp",
    "bp86": "gga_x_b88,gga_c_p86",
    "pw91": "gga_x_pw91,gga_c_pw91",
    "b97d": "gga_xc_b97_d",
    "pbe0": "hyb_gga_xc_pbeh",
    "pbeh": "hyb_gga_xc_pbeh",
    "b3lyp": "hyb_gga_xc_b3lyp",
    "b3lyp5": "hyb_gga_xc_b3lyp5",
    "b3pw91": "hyb_gga_xc_b3pw91",
    "bhandhlyp": "hyb_gga_xc_bhandhlyp",
    "hse06": "hyb_gga_xc_hse06",
    "cam-b3lyp": "hyb_gga_xc_cam_b3lyp",
    "camb3lyp": "hyb_gga_xc_cam_b3lyp",
    "wb97x": "hyb_gga_xc_wb97x",
    "lc-wpbe": "hyb_gga_xc_lc_wpbe",
    "scan": "mgga_x_scan,mgga_c_scan",
    "r2scan": "mgga_x_r2scan,mgga_c_r2scan",
    "tpss": "mgga_x_tpss,mgga_c_tpss",
    "m06l": "mgga_x_m06_l,mgga_c_m06_l",
    "m06-l": "mgga_x_m06_l,mgga_c_m06_l",
    "revtpss": "mgga_x_revtpss,mgga_c_revtpss",
    "tpssh": "hyb_mgga_xc_tpssh",
    "scan0": "hyb_mgga_x_scan0,mgga_c_scan",
    "r2scan0": "hyb_mgga_xc_r2scan0",
    "m06": "hyb_mgga_x_m06,mgga_c_m06",
    "hf": "hf",
}

FAMILIES = ("hf", "lda", "gga", "mgga")

#: Below this many points libxc is called single-threaded.
SERIAL_POINTS = 20000


def _libxc():
    from pyscf.dft import libxc  # imported lazily: pyscf start-up is slow

    return libxc


@dataclass(frozen=True)
class Functional:
    """A resolved exchange-correlation functional.

    ``family`` is the highest semilocal ingredient ("lda", "gga", "mgga") or
    "hf" for pure Hartree-Fock.  Exact exchange enters as
    c_lr K[1/r] + (c_sr - c_lr) K[erfc(ωr)/r]: short-range fraction
    ``exx_sr``, long-range fraction ``exx_lr``, range separation ``omega``
    (global hybrids have exx_sr = exx_lr and omega = 0).
    """

    name: str
    libxc: str
    family: str
    exx_sr: float = 0.0
    exx_lr: float = 0.0
    omega: float = 0.0

    @property
    def is_hybrid(self) -> bool:
        return self.exx_sr != 0.0 or self.exx_lr != 0.0

    @property
    def is_range_separated(self) -> bool:
        return self.omega != 0.0 and self.exx_sr != self.exx_lr

    @property
    def has_semilocal(self) -> bool:
        return self.family != "hf"

    @property
    def needs_gradient(self) -> bool:
        return self.family in ("gga", "mgga")

    @property
    def needs_tau(self) -> bool:
        return self.family == "mgga"

    @property
    def kind(self) -> str:
        """Readable kind: LDA, GGA, meta-GGA, hybrid GGA, range-separated hybrid GGA, HF."""
        if self.family == "hf":
            return "Hartree-Fock"
        base = {"lda": "LDA", "gga": "GGA", "mgga": "meta-GGA"}[self.family]
        if self.is_range_separated:
            return "range-separated hybrid " + base
        if self.is_hybrid:
            return "hybrid " + base
        return base

    def to_dict(self) -> dict:
        return {
            "name": self.name,
            "libxc": self.libxc,
            "kind": self.kind,
            "exx_sr": self.exx_sr,
            "exx_lr": self.exx_lr,
            "omega": self.omega,
        }


@cache
def _libxc_names() -> tuple[str, ...]:
    return tuple(sorted(k.lower() for k in _libxc().XC_CODES))


def _suggest(token: str) -> str:
    pool = list(dict.fromkeys(list(ALIASES) + list(_libxc_names())))
    close = difflib.get_close_matches(token.lower(), pool, n=3, cutoff=0.6)
    return f"; did you mean {' or '.join(repr(c) for c in close)}?" if close else ""


def _canonical(spec: str) -> str:
    """Check every component of a libxc identifier string; return it lower-cased."""
    names = set(_libxc_names())
    parts = []
    for raw in spec.split(","):
        term = raw.strip()
        if not term:
            raise UnknownFunctional(f"empty component in functional '{spec}'")
        coeff, _, fname = term.rpartition("*")
        fname = fname.strip()
        if fname not in names:
            raise UnknownFunctional(
                f"'{fname}' is not a libxc functional or a ks1d alias{_suggest(fname)}"
            )
        if coeff:
            try:
                float(coeff)
            except ValueError:
                raise UnknownFunctional(f"bad coefficient '{coeff}' in functional '{spec}'") from None
        parts.append(term)
    return ",".join(parts)


@lru_cache(maxsize=256)
def resolve_functional(name: str) -> Functional:
    """Resolve an alias or libxc identifier string to a :class:`Functional`.

    >>> resolve_functional("pbe0").exx_sr
    0.25
    """
    if not isinstance(name, str) or not name.strip():
        raise UnknownFunctional(f"functional must be a non-empty string, got {name!r}")
    key = name.strip().lower()
    if key in ("hf", "hartree-fock"):
        return Functional(name=name, libxc="hf", family="hf", exx_sr=1.0, exx_lr=1.0)
    spec = _canonical(ALIASES.get(key, key))
    try:
        return _classify(name, spec)
    except (ValueError, KeyError) as exc:  # libxc/pyscf refuse the combination
        if isinstance(exc, (UnknownFunctional, UnsupportedFunctional)):
            raise
        raise UnknownFunctional(f"libxc cannot combine '{name}': {exc}") from None


def _classify(name: str, spec: str) -> Functional:
    lx = _libxc()
    if lx.needs_laplacian(spec):
        raise UnsupportedFunctional(
            f"'{name}' depends on the density Laplacian; ks1d supports LDA, GGA and "
            "tau-dependent meta-GGA functionals"
        )
    if lx.is_nlc(spec):
        raise UnsupportedFunctional(f"'{name}' has a non-local (VV10-type) correlation part; not supported")
    family = {"LDA": "lda", "GGA": "gga", "MGGA": "mgga"}.get(lx.xc_type(spec))
    if family is None:
        raise UnsupportedFunctional(f"'{name}' is of libxc type {lx.xc_type(spec)}, which ks1d does not handle")
    omega, alpha, beta = lx.rsh_coeff(spec)
    if omega == 0.0:
        a = float(lx.hybrid_coeff(spec))
        return Functional(name=name, libxc=spec, family=family, exx_sr=a, exx_lr=a)
    # libxc/pyscf convention: alpha * K_full + beta * K_sr(erfc)
    return Functional(
        name=name, libxc=spec, family=family, exx_sr=float(alpha + beta), exx_lr=float(alpha), omega=float(omega)
    )


@dataclass(frozen=True)
class XCValues:
    """Energy density per volume and its partial derivatives on N points."""

    e: np.ndarray  # (N,)
    vrho: np.ndarray  # (ns, N)
    vsigma: np.ndarray | None  # (1, N) for ns = 1; (3, N) = (uu, ud, dd) for ns = 2
    vtau: np.ndarray | None  # (ns, N)


def evaluate_xc(func: Functional, rho: np.ndarray, grad: np.ndarray | None = None,
                tau: np.ndarray | None = None) -> XCValues:
    """Evaluate the semilocal part of ``func`` on points.

    E_xc = ∫ e(ρ_↑, ρ_↓, σ_↑↑, σ_↑↓, σ_↓↓, τ_↑, τ_↓) d³r; libxc returns
    ε = e/ρ, which is multiplied back here.  For hybrids libxc's semilocal
    part already carries the (1 - a) scaling of its exchange.
    """
    rho = np.asarray(rho, dtype=float)
    ns, npt = rho.shape
    zeros = XCValues(np.zeros(npt), np.zeros((ns, npt)),
                     np.zeros((1 if ns == 1 else 3, npt)) if func.needs_gradient else None,
                     np.zeros((ns, npt)) if func.needs_tau else None)
    if not func.has_semilocal:
        return zeros
    nrow = {"lda": 1, "gga": 4, "mgga": 6}[func.family]
    packed = np.zeros((ns, nrow, npt))
    packed[:, 0] = rho
    if nrow > 1:
        packed[:, 1:4] = grad
    if nrow == 6:
        packed[:, 5] = tau
    lx = _libxc()
    from pyscf.lib import with_omp_threads

    # OpenMP start-up costs more than it saves on small point sets (radial meshes, grid
    # batches), and oversubscribed threads are many times slower on a busy machine
    with with_omp_threads(1 if npt < SERIAL_POINTS else None):
        if ns == 1:
            arg = packed[0] if nrow > 1 else packed[0, 0]
            exc, vxc = lx.eval_xc(func.libxc, arg, spin=0, deriv=1)[:2]
            rho_tot = rho[0]
        else:
            arg = (packed[0], packed[1]) if nrow > 1 else (packed[0, 0], packed[1, 0])
            exc, vxc = lx.eval_xc(func.libxc, arg, spin=1, deriv=1)[:2]
            rho_tot = rho[0] + rho[1]
    vrho = np.asarray(vxc[0]).reshape(npt, ns).T if ns == 2 else np.asarray(vxc[0]).reshape(1, npt)
    vsigma = vtau = None
    if func.needs_gradient:
        vs = np.asarray(vxc[1])
        vsigma = vs.reshape(npt, 3).T if ns == 2 else vs.reshape(1, npt)
    if func.needs_tau:
        vt = np.asarray(vxc[3])
        vtau = vt.reshape(npt, ns).T if ns == 2 else vt.reshape(1, npt)
    e = np.asarray(exc) * rho_tot
    return XCValues(np.nan_to_num(e), np.nan_to_num(vrho),
                    None if vsigma is None else np.nan_to_num(vsigma),
                    None if vtau is None else np.nan_to_num(vtau))
