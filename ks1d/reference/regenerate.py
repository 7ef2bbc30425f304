"""Maintainer tool: regenerate the experimental ionisation-energy and
electron-affinity files from the data that mendeleev carries.

    python -m ks1d.reference.regenerate          # rewrites the two CSV files

mendeleev is a test extra, imported only here: the shipped package reads the
CSV files and never needs mendeleev at run time.  The files say which
mendeleev version they were generated from; rerun this after upgrading
mendeleev and review the diff.

Electron affinities are taken only for elements with a positive value, and
not for the lanthanides (La-Lu), Tc, Hf, Po, At, Fr, Ra and Ac: for those the
compilation mendeleev follows lists estimates or calculated values, or values
that later measurements revised, which are no basis for checking a functional.
Elements without a bound anion are stated in ``no_stable_anion.csv``, written
by hand with its own sources.
"""
from __future__ import annotations

import csv
from importlib import resources
from pathlib import Path

from ..elements import SYMBOLS

_HEADER = ("quantity", "key", "value", "unit", "source", "from_memory", "note")
_EA_EXCLUDED = set(range(57, 72)) | {43, 72, 84, 85, 87, 88, 89}


def _format(x: float) -> str:
    return repr(float(x))


def regenerate(directory: Path | None = None) -> tuple[int, int]:
    """Write ionisation_energies.csv and electron_affinities.csv; return the row counts."""
    import mendeleev
    from mendeleev.db import get_session
    from mendeleev.models import Element, IonizationEnergy

    directory = Path(directory) if directory else Path(str(resources.files(__package__)))
    version = mendeleev.__version__
    session = get_session()

    ie_rows = (session.query(IonizationEnergy)
               .filter(IonizationEnergy.ion_charge == 0, IonizationEnergy.atomic_number <= len(SYMBOLS))
               .order_by(IonizationEnergy.atomic_number).all())
    ie_source = (f"NIST Atomic Spectra Database (A. Kramida, Yu. Ralchenko, J. Reader and NIST ASD Team), "
                 f"ground levels and ionization energies of the neutral atoms, via mendeleev {version}")
    with open(directory / "ionisation_energies.csv", "w", newline="", encoding="utf-8") as fh:
        w = csv.writer(fh, lineterminator="\n")
        w.writerow(_HEADER)
        for r in ie_rows:
            parts = [f"ground {r.ground_configuration} {r.ground_level}",
                     f"ion {r.ionized_level}" if r.ionized_level else "",
                     f"uncertainty {r.uncertainty:g} eV" if r.uncertainty is not None else "",
                     f"NIST ASD refs {r.references}" if r.references else "",
                     "semi-empirical value" if r.is_semi_empirical else "",
                     "theoretical value" if r.is_theoretical else ""]
            w.writerow(["ionisation_energy", SYMBOLS[r.atomic_number - 1], _format(r.ionization_energy), "eV",
                        ie_source, "false", "; ".join(p for p in parts if p)])

    ea_rows = (session.query(Element.atomic_number, Element.electron_affinity)
               .filter(Element.atomic_number <= len(SYMBOLS)).order_by(Element.atomic_number).all())
    ea_source = (f"W. M. Haynes (ed.), CRC Handbook of Chemistry and Physics, 95th ed. (CRC Press, 2014), "
                 f"electron affinities (largely T. Andersen, H. K. Haugen, H. Hotop, J. Phys. Chem. Ref. Data "
                 f"28, 1511 (1999)), via mendeleev {version}")
    updates = {41: "Nb value updated in mendeleev from Luo et al. (2016)",
               27: "Co value updated in mendeleev from Chen et al. (2016)",
               82: "Pb value updated in mendeleev from Chen et al. (2016)"}
    n_ea = 0
    with open(directory / "electron_affinities.csv", "w", newline="", encoding="utf-8") as fh:
        w = csv.writer(fh, lineterminator="\n")
        w.writerow(_HEADER)
        for z, ea in ea_rows:
            if ea is None or ea <= 0 or z in _EA_EXCLUDED:
                continue
            w.writerow(["electron_affinity", SYMBOLS[z - 1], _format(round(ea, 10)), "eV", ea_source, "false",
                        updates.get(z, "")])
            n_ea += 1
    return len(ie_rows), n_ea


if __name__ == "__main__":
    n_ie, n_ea = regenerate()
    print(f"wrote {n_ie} ionisation energies and {n_ea} electron affinities")
