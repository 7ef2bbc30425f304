"""``ks1d basis-error``: how far a Gaussian basis is from the basis-set limit, per atom.

    ks1d basis-error C N O --basis def2-svp --xc pbe
    ks1d basis-error --xyz water.xyz --basis cc-pvdz --xc pbe0 --json
"""
from __future__ import annotations

from .. import units
from ..serialize import dumps
from ._common import BASIS_HELP, ProgressLine, basis_label, parse_basis


def register(subparsers) -> None:
    p = subparsers.add_parser(
        "basis-error", help="basis-set error of atomic energies (Gaussian basis vs radial limit)",
        description="For each atom: the energy in the Gaussian basis, the radial basis-set limit (same functional "
                    "and spin-polarized ground state, open shells spherically averaged in both) and the error "
                    "in mHa, eV and kcal/mol. With --xyz, the sum over the molecule's atoms as an estimate.")
    p.add_argument("elements", nargs="*", metavar="ELEMENT", help="element symbols or atomic numbers")
    p.add_argument("--xyz", metavar="FILE", help="molecule (XYZ or any format ASE reads, angstrom): use its atoms "
                                                 "and sum their errors")
    p.add_argument("--basis", required=True, metavar="NAME", help=BASIS_HELP)
    p.add_argument("--xc", default="pbe", metavar="NAME", help="functional (default: pbe)")
    p.add_argument("--precision", default="normal", choices=("low", "normal", "high"), help="radial mesh")
    p.add_argument("--grid", default="default", help="molecular grid level (coarse, default, fine, reference)")
    p.add_argument("--json", action="store_true", help="print one JSON object")
    p.add_argument("--quiet", action="store_true", help="no progress lines on stderr")
    p.set_defaults(func=run)


def format_report(rep) -> str:
    head = (f"{'atom':<5}{'2S+1':>5}{'E(basis) / Ha':>18}{'E(limit) / Ha':>18}"
            f"{'mHa':>10}{'eV':>10}{'kcal/mol':>10}  occupations")
    lines = [f"basis {basis_label(rep.basis)}, functional {rep.xc}"]
    models = list(dict.fromkeys(a.limit_model for a in rep.atoms if a.limit_model))
    for m in models:
        atoms = ", ".join(a.element for a in rep.atoms if a.limit_model == m)
        lines.append(f"E(limit) of {atoms}: {m}")
    lines += ["", head, "-" * len(head)]
    for a in rep.atoms:
        lines.append(f"{a.element:<5}{a.multiplicity:>5}{a.basis_energy:>18.8f}{a.radial_energy:>18.8f}"
                     f"{a.error_mhartree:>10.3f}{a.error_ev:>10.4f}{a.error_kcal_mol:>10.3f}  {a.occupations}")
    if rep.molecule is not None:
        t = rep.total_error
        counts = " + ".join(f"{n} x {s}" if n > 1 else s for s, n in rep.molecule["counts"].items())
        lines += ["", f"molecule {rep.molecule['name']} ({counts}): estimated basis-set error (sum over atoms)",
                  f"  {t * 1e3:.3f} mHa = {t * units.HARTREE_TO_EV:.4f} eV = "
                  f"{t * units.HARTREE_TO_KCAL_MOL:.3f} kcal/mol"]
    for w in rep.warnings:
        lines.append(f"warning: {w}")
    return "\n".join(lines)


def run(args) -> int:
    from ..threads import single_threaded
    from ..validate.basis_error import basis_error_report

    bar = ProgressLine("basis-error", enabled=not args.quiet)
    try:
        with single_threaded():  # small matrices: one BLAS/OpenMP thread is faster (see ks1d.threads)
            rep = basis_error_report(args.elements, basis=parse_basis(args.basis), xc=args.xc, xyz=args.xyz,
                                     precision=args.precision, grid=args.grid,
                                     progress=lambda i, n, s: bar.update(f"atom {i}/{n}: {s}"))
    finally:
        bar.close()
    print(dumps(rep.to_dict()) if args.json else format_report(rep))
    return 0
