"""``ks1d refs``: reference atomic total energies for a list of elements and functionals.

    ks1d refs H He Li-Ne --xc lda,pbe                 basis-set limit (radial solver)
    ks1d refs C N O --xc pbe0 --basis def2-tzvp --csv in a Gaussian basis (integer occupations)

The two are different models, labelled as such (see
:mod:`ks1d.sweep.properties.reference_energies`): the radial atoms are
spherical ensembles at the basis-set limit, the Gaussian-basis atoms have
integer occupations and may break spherical symmetry, so open-shell atoms can
lie below the radial values.
"""
from __future__ import annotations

import csv
import io
import json
import sys

from ..errors import InputError
from ..serialize import dumps

_CSV_COLUMNS = ("element", "Z", "xc", "libxc", "configuration", "spin", "multiplicity", "total_energy",
                "error_estimate", "error_kind", "converged", "iterations", "solver", "model", "settings",
                "ks1d_version", "error")


def register(subparsers) -> None:
    p = subparsers.add_parser(
        "refs", help="reference atomic energies (basis-set limit, or in a Gaussian basis)",
        description="Total energies of neutral atoms in their spin-polarized (Hund's rule) ground states, one row "
                    "per element and functional: at the basis-set limit (radial solver, spherical atoms), or with "
                    "--basis in a Gaussian basis (integer occupations, so open-shell atoms may break spherical "
                    "symmetry and lie below the spherical limit).")
    p.add_argument("elements", nargs="+", metavar="ELEMENT", help="symbols, atomic numbers or ranges such as Li-Ne")
    p.add_argument("--xc", required=True, metavar="NAME[,NAME...]", help="functionals (ks1d aliases or libxc ids; "
                   "separate several with commas, or with ';' when a libxc id itself has commas)")
    p.add_argument("--basis", metavar="NAME", help="Gaussian-basis energies (integer occupations) instead of the "
                   "radial basis-set limit")
    p.add_argument("--relativity", default="none", choices=("none", "scalar", "x2c"),
                   help="radial Hamiltonian: none, scalar (Koelling-Harmon; LDA/GGA), x2c (spin-free X2C-1e)")
    p.add_argument("--precision", default="normal", choices=("low", "normal", "high"),
                   help="radial mesh precision (default: normal)")
    p.add_argument("--workers", type=int, default=0, metavar="N",
                   help="worker processes (default 0: run in this process)")
    p.add_argument("--quiet", action="store_true", help="no progress line on stderr")
    fmt = p.add_mutually_exclusive_group()
    fmt.add_argument("--json", action="store_true", help="print a JSON list of row objects")
    fmt.add_argument("--csv", action="store_true", help="print CSV")
    p.set_defaults(func=_refs)


def split_functionals(text: str) -> list[str]:
    """'lda,pbe' → ['lda', 'pbe'];  'gga_x_pbe,gga_c_pbe,lda' → ['gga_x_pbe,gga_c_pbe', 'lda'].

    ';' always separates functionals.  Commas separate them too, except that
    the longest run of comma-joined names that is one functional (a libxc
    identifier list) is kept together.
    """
    from ..xc import resolve_functional

    names: list[str] = []
    for chunk in (t.strip() for t in text.split(";")):
        parts = [t.strip() for t in chunk.split(",") if t.strip()]
        i = 0
        while i < len(parts):
            for j in range(len(parts), i, -1):
                cand = ",".join(parts[i:j])
                try:
                    resolve_functional(cand)
                except ValueError:  # InputError, or libxc's parser refusing a long combination
                    if j == i + 1:
                        raise
                    continue
                names.append(cand)
                i = j
                break
    if not names:
        raise InputError("--xc needs at least one functional name")
    return list(dict.fromkeys(names))


def _refs(args) -> int:
    from ..sweep.engine.executors import make_executor
    from ..sweep.properties.reference_energies import reference_energies
    from ..sweep.properties.systems import parse_elements

    if args.workers < 0:
        raise InputError(f"--workers must be 0 or more, got {args.workers}")
    symbols = parse_elements(args.elements)
    xcs = split_functionals(args.xc)
    basis = None if args.basis is None else args.basis.strip()
    if basis == "":
        raise InputError("--basis needs a basis name, e.g. --basis def2-tzvp")
    rows = reference_energies(symbols, xcs, basis=basis, precision=args.precision, relativity=args.relativity,
                              executor=make_executor(workers=args.workers), progress=not args.quiet,
                              stream=sys.stderr)
    if args.json:
        print(dumps([r.to_dict() for r in rows], indent=1))
    elif args.csv:
        buf = io.StringIO()
        w = csv.DictWriter(buf, fieldnames=_CSV_COLUMNS, lineterminator="\n")
        w.writeheader()
        for r in rows:
            d = r.to_dict()
            d["settings"] = json.dumps(d["settings"], sort_keys=True)
            w.writerow({k: ("" if d.get(k) is None else d[k]) for k in _CSV_COLUMNS})
        print(buf.getvalue(), end="")
    else:
        print(_table(rows, args))
    return 0 if all(r.error is None for r in rows) else 3


def _table(rows, args) -> str:
    from .._version import __version__
    from ..sweep.properties.reference_energies import model_of

    head = ("element", "xc", "configuration", "2S+1", "total_energy/Ha", "error est./Ha")
    body = []
    for r in rows:
        if r.error:
            body.append((r.element, r.xc, r.configuration, str(r.multiplicity or ""), "failed", r.error[:60]))
        else:
            body.append((r.element, r.xc, r.configuration, str(r.multiplicity or ""), f"{r.total_energy:.8f}",
                         "" if r.error_estimate is None else f"{r.error_estimate:.1e}"))
    widths = [max(len(h), *(len(b[i]) for b in body)) for i, h in enumerate(head)]
    right = {3, 4, 5}

    def line(cells):
        return "  ".join(c.rjust(w) if i in right else c.ljust(w) for i, (c, w) in enumerate(zip(cells, widths)))

    if args.basis:
        title = [f"Atomic energies in a Gaussian basis, not at the basis-set limit; ks1d {__version__}",
                 f"model: {model_of(args.basis.strip())}"]
    else:
        title = [f"Reference atomic energies at the basis-set limit (precision {args.precision}); ks1d {__version__}",
                 f"model: {model_of(None, args.relativity)}"]
    out = title + [line(head), line(["-" * w for w in widths])]
    out += [line(b) for b in body]
    libxc = {r.xc: r.libxc for r in rows}
    out.append("functionals: " + "; ".join(f"{k} = {v}" for k, v in libxc.items()))
    if rows:
        out.append(f"error estimate: {rows[0].error_kind}")
    return "\n".join(out)
