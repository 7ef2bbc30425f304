"""``ks1d report``: the functional sanity report for the elements of a planned big run.

    ks1d report Fe O N                          element list, default functional ladder
    ks1d report cell.extxyz --basis def2-tzvp   elements and bonded pairs of a structure
    ks1d report Ti O --xc pbe,r2scan,hse06 --output tio2-check
"""
from __future__ import annotations

import os
import sys

from ..errors import InputError
from ..serialize import dumps

_STRUCTURE_SUFFIXES = (".xyz", ".extxyz", ".exyz")


def register(subparsers) -> None:
    from ..report.plan import DEFAULT_FUNCTIONALS, SYMMETRY_BROKEN_BASIS

    p = subparsers.add_parser(
        "report", help="functional sanity report (HTML + Markdown) for a set of elements",
        description="How candidate functionals do on the atoms and diatomics of your system: IPs, EAs, s->d "
                    "promotion, -HOMO against the IP, spin polarization, basis-set error of the planned basis, "
                    "diatomic r_e, omega_e and D_0, against experiment, with a ranking. Writes one self-contained "
                    "HTML page and a Markdown twin; every result is kept in a sweep store and reused.")
    p.add_argument("inputs", nargs="+", metavar="ELEMENTS|FILE",
                   help="element symbols, numbers or ranges (Fe O 21-30), or one XYZ / extended-XYZ file")
    p.add_argument("--xc", metavar="NAME[,NAME...]",
                   help=f"functionals (default: {','.join(DEFAULT_FUNCTIONALS)}); commas or ';' separate them")
    p.add_argument("--basis", metavar="NAME", help="the Gaussian basis planned for the big run: adds its "
                   "basis-set errors, and the diatomics use it (default for diatomics: def2-tzvp)")
    p.add_argument("--no-diatomics", action="store_true", help="leave out the diatomic molecules")
    p.add_argument("--symmetry-broken", action="store_true",
                   help="IPs and EAs of integer-occupation (symmetry-broken) atoms, as production codes get them: "
                        "the spherical basis-set limit plus the symmetry-breaking energy in a Gaussian basis; "
                        "slower, most for open 3d shells")
    p.add_argument("--symmetry-basis", default=SYMMETRY_BROKEN_BASIS, metavar="NAME",
                   help=f"basis of that correction (default {SYMMETRY_BROKEN_BASIS})")
    p.add_argument("--output", "-o", default="ks1d-report", metavar="PATH",
                   help="output stem: writes PATH.html, PATH.md, PATH.json and PATH_plots/ (default: ks1d-report)")
    p.add_argument("--store", metavar="FILE", help="sweep store to keep and reuse results (default: PATH.sqlite)")
    p.add_argument("--workers", type=int, default=None, metavar="N",
                   help="worker processes (default: one per core; 0 runs in this process)")
    p.add_argument("--retry-failed", action="store_true", help="run jobs that failed in an earlier report again")
    p.add_argument("--quiet", action="store_true", help="no progress line on stderr")
    p.add_argument("--json", action="store_true", help="print a JSON summary instead of the text summary")
    p.set_defaults(func=_report)


def _is_structure(tokens: list[str]) -> bool:
    if len(tokens) != 1:
        return False
    t = tokens[0]
    return t.lower().endswith(_STRUCTURE_SUFFIXES) or os.path.sep in t or os.path.isfile(t)


def _report(args) -> int:
    from ..report.run import functional_report
    from ..sweep.engine.executors import make_executor
    from .refs import split_functionals

    if args.workers is not None and args.workers < 0:
        raise InputError(f"--workers must be 0 or more, got {args.workers}")
    structure = args.inputs[0] if _is_structure(args.inputs) else None
    if structure is None and any(t.lower().endswith(_STRUCTURE_SUFFIXES) for t in args.inputs):
        raise InputError("give either element symbols or one structure file, not both")
    xcs = split_functionals(args.xc) if args.xc else None
    out = functional_report(elements=() if structure else args.inputs, structure=structure, functionals=xcs,
                            basis=args.basis, output=args.output, store=args.store,
                            executor=make_executor(workers=args.workers), diatomics=not args.no_diatomics,
                            progress=not args.quiet, stream=sys.stderr,
                            retry_failed=args.retry_failed,
                            symmetry_broken=args.symmetry_basis if args.symmetry_broken else None)
    if args.json:
        print(dumps(out.to_dict(), indent=1))
    else:
        print(_summary(out))
    return 0  # failed jobs are findings, listed in the report; the report itself was written


def _summary(out) -> str:
    lines = [f"Functional sanity report for {' '.join(out.plan.elements)}: {out.jobs_total} jobs "
             f"({out.jobs_reused} reused, {out.jobs_run} computed, {out.jobs_failed} failed) in {out.seconds:.1f} s"]
    lines.append("ranking by pooled MAE against experiment (eV):")
    for e in out.data.ranking:
        score = "—" if e.score is None else f"{e.score:.3f}"
        lines.append(f"  {str(e.rank or '-'):>2}  {e.functional:<10} {score:>7}  N={e.n}  {e.note}")
    if out.data.flags:
        lines.append(f"{len(out.data.flags)} flags (unbound anions, failed steps): see the report")
    lines.append(f"HTML:     {out.paths['html']}")
    lines.append(f"Markdown: {out.paths['markdown']}")
    lines.append(f"JSON:     {out.paths['json']}")
    lines.append(f"store:    {out.store}")
    return "\n".join(lines)
