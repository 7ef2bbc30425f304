"""``ks1d molecule``: Kohn–Sham ground state of a molecule in a Gaussian basis."""
from __future__ import annotations

import sys

from ..serialize import dumps
from ..units import HARTREE_TO_EV
from ._common import (
    BASIS_HELP,
    ProgressLine,
    add_output_options,
    basis_label,
    check_writable,
    parse_basis,
    write_json_document,
)


def register(sub) -> None:
    p = sub.add_parser("molecule", help="solve a molecule in a Gaussian basis",
                       description="Kohn-Sham (or Hartree-Fock) SCF of a molecule given as a structure file "
                                   "(XYZ, extended XYZ, or any format ASE reads: CIF, PDB, plane-wave inputs...; Å).")
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
    g = p.add_argument_group("forces, optimisation and frequencies")
    g.add_argument("--gradient", action="store_true",
                   help="also compute the analytic nuclear gradient (Ha/bohr) and forces (eV/Å)")
    g.add_argument("--optimize", action="store_true",
                   help="optimise the geometry (geomeTRIC internal coordinates; a line per step on stderr)")
    g.add_argument("--output-xyz", metavar="OUT", default=None,
                   help="with --optimize: write the optimised geometry (or the last one, if it fails) to OUT")
    g.add_argument("--max-force", type=float, default=None, metavar="HA_PER_BOHR",
                   help="with --optimize: convergence threshold on the largest force (default 4.5e-4)")
    g.add_argument("--max-steps", type=int, default=100,
                   help="with --optimize: optimisation steps before giving up (default 100)")
    g.add_argument("--frequencies", action="store_true",
                   help="harmonic frequencies from central differences of analytic gradients "
                        "(after the optimisation when given with --optimize)")
    g.add_argument("--fd-step", type=float, default=None, metavar="BOHR",
                   help="with --frequencies: finite-difference step (default 0.005 bohr)")
    add_output_options(p, qcschema=True)
    p.set_defaults(func=run)


def run(args) -> int:
    from ..gaussian.scf import solve_molecule
    from ..qcschema import molecule_to_qcschema
    from ..structure import read_structure

    check_writable(args.qcschema)
    _check_task_options(args)
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
    if args.optimize or args.frequencies:
        for note in notes:
            print(f"ks1d: warning: {note}", file=sys.stderr)
        common = dict(basis=basis, xc=args.xc, charge=args.charge, multiplicity=args.multiplicity, spin=args.spin,
                      grid=args.grid, scf=scf, guess=args.guess)
        return _run_geometry_task(args, structure, common)
    bar = ProgressLine("molecule", enabled=not args.quiet)
    try:
        res = solve_molecule(structure, basis=basis, xc=args.xc, charge=args.charge,
                             multiplicity=args.multiplicity, spin=args.spin, grid=args.grid, guess=args.guess,
                             scf=scf, progress=bar.scf, gradient=args.gradient)
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
    if res.grid_error_estimate is not None:
        finer = res.settings.get("grid_error_reference_level", "a finer grid")
        lines.append(f"{'grid error estimate':<24}{res.grid_error_estimate:>20.1e} Ha  (E_xc on the {finer} grid "
                     "minus E_xc on this one, same density)")
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
    if res.gradient is not None:
        lines += ["", format_gradient(res)]
    return "\n".join(lines)


# ------------------------------------------------------------ gradient, optimisation, frequencies
def _check_task_options(args) -> None:
    """Refuse inconsistent flags before any computation."""
    from ..errors import InputError

    if args.output_xyz is not None and not args.optimize:
        raise InputError("--output-xyz writes the optimised geometry; it needs --optimize")
    if (args.max_force is not None or args.max_steps != 100) and not args.optimize:
        raise InputError("--max-force and --max-steps apply to --optimize")
    if args.fd_step is not None and not args.frequencies:
        raise InputError("--fd-step applies to --frequencies")
    check_writable(args.output_xyz)


def format_gradient(res) -> str:
    """Table of ∂E/∂R (Ha/bohr) and forces (eV/Å) per atom."""
    import numpy as np

    g, f = np.asarray(res.gradient), res.forces
    lines = [f"{'atom':<8}{'dE/dx':>13}{'dE/dy':>13}{'dE/dz':>13}   (Ha/bohr)"
             f"{'Fx':>12}{'Fy':>12}{'Fz':>12}   (eV/Å)"]
    for i, sym in enumerate(res.geometry["symbols"]):
        lines.append(f"{sym + str(i + 1):<8}{g[i, 0]:>13.7f}{g[i, 1]:>13.7f}{g[i, 2]:>13.7f}{'':11}"
                     f"{f[i, 0]:>12.5f}{f[i, 1]:>12.5f}{f[i, 2]:>12.5f}")
    lines.append(f"max |dE/dR| {np.abs(g).max():.3e} Ha/bohr; |sum of forces| "
                 f"{np.abs(g.sum(axis=0)).max():.1e} Ha/bohr")
    return "\n".join(lines)


def format_optimization(opt) -> str:
    lines = [f"geometry optimisation  {'converged' if opt.converged else 'NOT converged'} in {opt.iterations} "
             f"gradient evaluations ({opt.timings['scf_iterations']} SCF iterations, {opt.timings['total']:.1f} s)",
             f"final energy           {opt.total_energy:.10f} Ha, max force {opt.max_force:.2e} Ha/bohr "
             f"(criterion {opt.criteria['max_force']:.1e})", "", "optimised geometry (XYZ, Å):", opt.geometry.rstrip()]
    return "\n".join(lines)


def format_frequencies(fr) -> str:
    lines = [f"harmonic frequencies   {len(fr.wavenumbers)} modes{' (linear molecule)' if fr.linear else ''}, "
             f"central differences of {fr.settings['gradients']} analytic gradients, step {fr.step:g} bohr",
             f"largest force at the structure {fr.max_force:.2e} Ha/bohr", "",
             f"{'mode':<6}{'wavenumber / cm^-1':>20}{'reduced mass / u':>18}"]
    for i, (w, mu) in enumerate(zip(fr.wavenumbers, fr.reduced_masses), 1):
        tag = "  (imaginary)" if w < 0 else ""
        lines.append(f"{i:<6}{w:>20.2f}{mu:>18.4f}{tag}")
    lines.append(f"zero-point energy      {fr.zero_point_energy:.8f} Ha  ({fr.zero_point_energy_ev:.5f} eV)")
    return "\n".join(lines)


def _run_geometry_task(args, structure, common: dict) -> int:
    """--optimize and/or --frequencies."""
    import warnings

    from ..frequencies import harmonic_frequencies
    from ..optimize import OptimizationError, optimize_molecule
    from ..qcschema import molecule_to_qcschema

    out = {}
    texts = []
    start = None
    geometry = structure
    if args.optimize:
        def step_line(s):
            if not args.quiet:
                print(f"ks1d molecule: optimisation step {s.iteration}: E = {s.energy:.10f} Ha, max force "
                      f"{s.max_force:.2e} Ha/bohr, step {s.step:.2e} bohr, {s.scf_iterations} SCF iterations",
                      file=sys.stderr, flush=True)

        criteria = {"max_force": args.max_force} if args.max_force is not None else None
        try:
            opt = optimize_molecule(structure, criteria=criteria, max_steps=args.max_steps, progress=step_line,
                                    **common)
        except OptimizationError as exc:
            if args.output_xyz and exc.geometry:
                _write_text(args.output_xyz, exc.geometry)
                print(f"ks1d: the last geometry is in '{args.output_xyz}'", file=sys.stderr)
            raise
        if args.output_xyz:
            _write_text(args.output_xyz, opt.geometry)
        out["optimization"] = opt.to_dict()
        texts += [format_molecule(opt.result), "", format_optimization(opt)]
        geometry, start, final = opt.geometry, opt.result, opt.result
    if args.frequencies:
        bar = ProgressLine("molecule", enabled=not args.quiet)
        try:
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")  # the result's warnings are printed below
                kw = {} if args.fd_step is None else {"step": args.fd_step}
                fr = harmonic_frequencies(geometry, start=start, progress=lambda i, n: bar.update(
                    f"frequencies: gradient {i} of {n}"), **kw, **common)
        finally:
            bar.close()
        for note in fr.warnings:
            print(f"ks1d: warning: {note}", file=sys.stderr)
        out["frequencies"] = fr.to_dict()
        if not args.optimize:
            texts += [format_molecule(fr.reference)]
        texts += ["", format_frequencies(fr)]
        final = fr.reference
    if args.qcschema:
        write_json_document(molecule_to_qcschema(final), args.qcschema)
        if args.qcschema == "-":
            return 0
    if args.json:
        print(dumps(out["optimization"] if len(out) == 1 and "optimization" in out else
                    out["frequencies"] if len(out) == 1 else out))
    else:
        print("\n".join(texts))
    return 0


def _write_text(path: str, text: str) -> None:
    with open(path, "w", encoding="utf-8") as fh:
        fh.write(text)
