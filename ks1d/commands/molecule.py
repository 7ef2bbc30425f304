"""``ks1d molecule``: Kohn–Sham ground state of a molecule in a Gaussian basis."""
from __future__ import annotations

import sys

from ..serialize import dumps
from ..units import HARTREE_TO_EV
from ._common import check_writable, BASIS_HELP, ProgressLine, add_output_options, basis_label, parse_basis, write_json_document


def register(sub) -> None:
    p = sub.add_parser("molecule", help="solve a molecule in a Gaussian basis",
                       description="Kohn-Sham (or Hartree-Fock) SCF of a molecule given as a structure file "
                                   "(XYZ, extended XYZ, or any format ASE reads: CIF, PDB, POSCAR, ...; Å).")
    p.add_argument("structure", help="structure file (coordinates in ångström)")
    p.add_argument("--basis", default="def2-svp", help=BASIS_HELP + " (default: def2-svp)")
    p.add_argument("--xc", default="pbe", help="functional alias or libxc identifiers (default: pbe)")
    p.add_argument("--charge", type=int, default=0, help="net charge (default 0)")
    p.add_argument("--multiplicity", type=int, default=1, help="spin multiplicity 2S+1 (default 1)")
    p.add_argument("--spin", choices=("restricted", "polarized"), default=None,
                   help="restricted (RKS) or polarized (UKS) orbitals (default: restricted for singlets)")
    p.add_argument("--grid", default="default", help="grid level: coarse, default, fine, reference")
    p.add_argument("--guess", default="atoms", help="initial guess: atoms (radial atoms) or core")
    p.add_argument("--smearing", type=float, default=None, metavar="HARTREE",
                   help="Fermi-Dirac smearing width (default 0: aufbau)")
    p.add_argument("--damping", type=float, default=None,
                   help="fraction of the previous Fock matrix kept per step, in [0, 1) (default 0)")
    p.add_argument("--level-shift", type=float, default=None, metavar="HARTREE",
                   help="virtual-orbital level shift (default 0)")
    p.add_argument("--max-iterations", type=int, default=None, help="SCF iteration limit (default 100)")
    p.add_argument("--as-cluster", action="store_true",
                   help="compute the atoms of a periodic structure's cell as a finite cluster (with a warning)")
    add_output_options(p, qcschema=True)
    p.set_defaults(func=run)


def run(args) -> int:
    from ..gaussian.scf import solve_molecule
    from ..qcschema import molecule_to_qcschema
    from ..structure import read_structure

    check_writable(args.qcschema)
    basis = parse_basis(args.basis)
    structure = read_structure(args.structure)
    notes = []
    if structure.periodic and args.as_cluster:
        notes.append(f"'{args.structure}' is periodic; its {structure.natom} cell atoms are computed as an "
                     "isolated cluster (--as-cluster)")
        structure = read_structure(structure.to_xyz())
    scf = {k: v for k, v in (("smearing", args.smearing), ("damping", args.damping),
                             ("level_shift", args.level_shift), ("max_iterations", args.max_iterations))
           if v is not None}
    bar = ProgressLine("molecule", enabled=not args.quiet)
    try:
        res = solve_molecule(structure, basis=basis, xc=args.xc, charge=args.charge,
                             multiplicity=args.multiplicity, spin=args.spin, grid=args.grid, guess=args.guess,
                             scf=scf, progress=bar.scf)
    finally:
        bar.close()
    for note in notes:
        print(f"ks1d: warning: {note}", file=sys.stderr)
    if args.qcschema:
        write_json_document(molecule_to_qcschema(res), args.qcschema)
        if args.qcschema == "-":
            return 0
    if args.json:
        print(dumps(res.to_dict()))
    else:
        print(format_molecule(res))
    return 0


def format_molecule(res) -> str:
    """Readable summary: settings, energy components, orbitals near the gap, analysis."""
    s = res.settings
    f = res.functional
    formula = " ".join(res.geometry["symbols"])
    lines = [
        f"molecule       {formula}  (charge {res.charge:+d}, multiplicity {res.multiplicity}, "
        f"{res.spin})",
        f"basis          {basis_label(s['basis'])}  ({res.basis_functions} functions)",
        f"functional     {f['name']}  [{f['libxc']}, {f['kind']}]",
        f"grid           {s['grid_level']}  ({res.grid_points} points), guess: {s['guess']}",
        f"SCF            {'converged' if res.converged else 'NOT converged'} in {res.iterations} iterations"
        f"  ({res.timings['total']:.2f} s)",
        "",
        f"{'energy':<24}{'hartree':>20}{'eV':>18}",
    ]
    comps = res.components.to_dict()
    for name, val in [("total", res.total_energy)] + list(comps.items()):
        lines.append(f"{name.replace('_', ' '):<24}{val:>20.8f}{val * HARTREE_TO_EV:>18.5f}")
    lines.append("")
    if res.homo_lumo_gap is not None:
        lines.append(f"HOMO / LUMO / gap       {res.homo_energy:.6f} / {res.lumo_energy:.6f} / "
                     f"{res.homo_lumo_gap:.6f} Ha  ({res.homo_lumo_gap * HARTREE_TO_EV:.3f} eV)")
    if res.spin == "polarized":
        lines.append(f"<S^2>                   {res.spin_square:.6f}")
    d = res.dipole
    lines.append(f"dipole / e bohr         {d[0]:+.6f} {d[1]:+.6f} {d[2]:+.6f}   "
                 f"|mu| = {res.dipole_debye:.4f} D")
    lines += ["", f"{'atom':<8}{'Mulliken charge':>16}"]
    for i, (sym, q) in enumerate(zip(res.geometry["symbols"], res.mulliken_charges), 1):
        lines.append(f"{sym + str(i):<8}{q:>16.5f}")
    lines += ["", f"{'orbital':<9}{'spin':<12}{'occupation':>11}{'energy / Ha':>16}{'energy / eV':>14}"]
    for o in res.orbitals:
        if o.occupation > 1e-8 or (res.lumo_energy is not None and o.energy <= res.lumo_energy + 0.5):
            lines.append(f"{o.index + 1:<9}{o.spin:<12}{o.occupation:>11.4g}{o.energy:>16.8f}"
                         f"{o.energy * HARTREE_TO_EV:>14.5f}")
    return "\n".join(lines)
