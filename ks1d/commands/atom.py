"""``ks1d atom``: one spherical atom at the radial basis-set limit."""
from __future__ import annotations

from ..serialize import dumps
from ..units import HARTREE_TO_EV
from ._common import ProgressLine, add_output_options, check_writable, write_json_document


def register(sub) -> None:
    p = sub.add_parser("atom", help="solve one atom on the radial finite-element mesh",
                       description="Solve the Kohn-Sham equations of a spherical atom at the basis-set limit.")
    p.add_argument("element", help="element symbol or atomic number (1-92)")
    p.add_argument("--xc", default="lda", help="functional alias or libxc identifiers (default: lda = lda_x,lda_c_vwn)")
    p.add_argument("--charge", type=float, default=0.0, help="net charge (default 0)")
    p.add_argument("--restricted", action="store_true",
                   help="spin-restricted (spin-averaged) instead of Hund's-rule polarized")
    p.add_argument("--spin", type=int, default=None, metavar="2S", help="fix N_up - N_down (overrides Hund's rule)")
    p.add_argument("--config", default=None, help="configuration, e.g. '[Ar] 3d7 4s1' or '[He] 2s2 2p(3,1)'")
    p.add_argument("--relativity", choices=("none", "scalar", "x2c", "dirac"), default="none",
                   help="Hamiltonian: none (Schroedinger), scalar (Koelling-Harmon; LDA/GGA), x2c (spin-free "
                        "X2C-1e; every functional), dirac (four-component, j-resolved; LDA/GGA, restricted)")
    p.add_argument("--nucleus", choices=("point", "gaussian"), default="point",
                   help="nuclear charge model (gaussian: Visscher-Dyall radius, ks1d.nuclei)")
    p.add_argument("--precision", choices=("low", "normal", "high"), default="normal")
    p.add_argument("--no-error-estimate", action="store_true", help="skip the refined-mesh error estimate")
    p.add_argument("--damping", type=float, default=None,
                   help="fraction of the previous SCF input kept per step, in [0, 1) (default 0.5)")
    p.add_argument("--max-iterations", type=int, default=None, help="SCF iteration limit (default 150)")
    add_output_options(p, qcschema=True)
    p.add_argument("--radial", action="store_true",
                   help="with --json: include density, potentials and orbitals on the mesh")
    p.set_defaults(func=run)


def run(args) -> int:
    from ..radial.scf import solve_atom

    check_writable(args.qcschema)
    if args.restricted and args.spin is not None:
        from ..errors import SpinError

        raise SpinError("--restricted and --spin contradict each other; give one of them")
    spin = "restricted" if args.restricted else (None if args.spin is None else args.spin)
    scf = {k: v for k, v in (("damping", args.damping), ("max_iterations", args.max_iterations)) if v is not None}
    bar = ProgressLine("atom", enabled=not args.quiet)
    try:
        res = solve_atom(args.element, xc=args.xc, charge=args.charge, spin=spin, config=args.config,
                         precision=args.precision, estimate_error=not args.no_error_estimate, scf=scf,
                         relativity=args.relativity, nucleus=args.nucleus, progress=bar.scf)
    finally:
        bar.close()
    if args.qcschema:
        from ..qcschema import atom_to_qcschema

        write_json_document(atom_to_qcschema(res), args.qcschema)
        if args.qcschema == "-":
            return 0
    if args.json:
        print(dumps(res.to_dict(include_radial=args.radial)))
    else:
        print(format_atom(res))
    return 0


def format_atom(res) -> str:
    """Readable summary: settings, energy components and the orbital table."""
    f = res.functional
    lines = [
        f"{res.element} (Z = {res.Z}), charge {res.charge:+g}, {res.spin}",
        f"hamiltonian    relativity {res.relativity}, {res.nucleus} nucleus",
        f"configuration  {res.configuration}",
        f"functional     {res.xc}  [{f['libxc']}, {f['kind']}]",
        f"SCF            {'converged' if res.converged else 'NOT converged'} in {res.iterations} iterations",
        "",
        f"{'energy':<24}{'hartree':>20}{'eV':>18}",
    ]
    rows = [("total", res.total_energy)] + [(k.replace("_", " "), v) for k, v in res.components.items()
                                            if k != "nuclear_repulsion"]
    for name, val in rows:
        lines.append(f"{name:<24}{val:>20.8f}{val * HARTREE_TO_EV:>18.5f}")
    est = "not estimated" if res.error_estimate is None else f"{res.error_estimate:.1e} Ha"
    lines += [
        f"{'numerical error':<24}{est:>20}",
        f"{'virial ratio -V/T':<24}{res.virial_ratio:>20.8f}",
        "",
        f"{'orbital':<9}{'spin':<6}{'occupation':>11}{'energy / Ha':>16}{'energy / eV':>14}",
    ]
    for o in res.orbitals:
        lines.append(f"{o.label:<9}{o.spin:<6}{o.occupation:>11.4g}{o.energy:>16.8f}{o.energy * HARTREE_TO_EV:>14.5f}")
    for w in res.warnings:
        lines.append(f"warning: {w}")
    return "\n".join(lines)
