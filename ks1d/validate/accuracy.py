"""Published typical accuracy of functionals for ionisation potentials and electron affinities.

The IP/EA checks of ``ks1d check`` compare ΔSCF values with experiment.  A
functional's error is not zero even at the basis-set limit, so the
tolerance comes from the mean absolute error (MAE) published for that
functional on a standard test set:

* V. N. Staroverov, G. E. Scuseria, J. Tao and J. P. Perdew,
  J. Chem. Phys. 119, 12129 (2003), G3/99 test set (86 ionisation potentials,
  58 electron affinities of atoms and small molecules), large basis
  (6-311++G(3df,3pd)).  Values from memory, rounded to 0.01 eV; they are
  approximate and flagged as such in every check they enter.

Per-species tolerance: 2.5 × MAE.  For roughly normal errors MAE ≈ 0.8 σ,
so 2.5 MAE ≈ 2σ bounds about 95 % of the individual errors (common
practice).  Set tolerance: the MAE over the checked species must stay below
1.5 × the published MAE (a small sample of atoms scatters around the
test-set MAE; common practice).
"""
from __future__ import annotations

from dataclasses import dataclass

from ..errors import UnsupportedFunctional
from ..xc import resolve_functional

PER_SPECIES_FACTOR = 2.5
SET_FACTOR = 1.5

_SOURCE = ("V. N. Staroverov, G. E. Scuseria, J. Tao and J. P. Perdew, J. Chem. Phys. 119, 12129 (2003), "
           "G3/99 test set MAE (from memory)")


@dataclass(frozen=True)
class TypicalAccuracy:
    """Published MAEs (eV) of one functional for IPs and EAs, with the source."""

    functional: str
    ip_mae_ev: float
    ea_mae_ev: float
    source: str
    from_memory: bool = True

    def to_dict(self) -> dict:
        return dict(vars(self))


#: keyed by libxc identifier (as resolved by ks1d.xc.resolve_functional)
TYPICAL_ACCURACY: dict[str, TypicalAccuracy] = {
    "lda_x,lda_c_vwn": TypicalAccuracy("lda", 0.22, 0.24, _SOURCE),
    "gga_x_pbe,gga_c_pbe": TypicalAccuracy("pbe", 0.23, 0.12, _SOURCE),
    "mgga_x_tpss,mgga_c_tpss": TypicalAccuracy("tpss", 0.24, 0.14, _SOURCE),
    "hyb_gga_xc_pbeh": TypicalAccuracy("pbe0", 0.20, 0.14, _SOURCE),
    "hyb_gga_xc_b3lyp": TypicalAccuracy("b3lyp", 0.18, 0.12, _SOURCE),
}


def typical_accuracy(xc: str) -> TypicalAccuracy:
    """The published accuracy of ``xc``; UnsupportedFunctional if ks1d records none."""
    f = resolve_functional(xc)
    acc = TYPICAL_ACCURACY.get(f.libxc)
    if acc is None:
        known = ", ".join(a.functional for a in TYPICAL_ACCURACY.values())
        raise UnsupportedFunctional(
            f"no published IP/EA accuracy is recorded for '{xc}' ({f.libxc}), so the IP/EA checks have no "
            f"tolerance; choose --xc from: {known}")
    return acc
