"""``ks1d refs``: reference atomic total energies for a list of elements and functionals.

    ks1d refs H He Li-Ne --xc lda,pbe                 basis-set limit (radial solver)
    ks1d refs C N O --xc pbe0 --basis def2-tzvp --csv in a Gaussian basis
"""
from __future__ import annotations

from ..serialize import dumps

import csv
import io
import json

from ..errors import InputError

_CSV_COLUMNS = ("element", "Z", "xc", "libxc", "configuration", "spin", "multiplicity", "total_energy",
                "error_estimate", "error_kind", "converged", "iterations", "solver", "settings", "ks1d_version",
                "error")


def register(subparsers) -> None:
    p = subparsers.add_parser(
        "refs", help="reference atomic energies (spin-polarized ground states)",
        description="Total energies of neutral atoms in their spin-polarized (Hund's rule) ground states, at the "
                    "basis-set limit (radial solver) or in a Gaussian basis, one row per element and functional.")
    p.add_argument("elements", nargs="+", metavar="ELEMENT", help="symbols, atomic numbers or ranges such as Li-Ne")
    p.add_argument("--xc", required=True, metavar="NAME[,NAME...]", help="functionals (ks1d aliases or libxc ids; "
                   "separate several with commas, or with ';' when a libxc id itself has commas)")
    p.add_argument("--basis", metavar="NAME", help="Gaussian basis instead of the basis-set limit")
    p.add_argument("--precision", default="normal", choices=("low", "normal", "high"),
                   help="radial mesh precision (default: normal)")
    p.add_argument("--workers", type=int, default=0, metavar="N",
                   help="worker processes (default 0: run in this process)")
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
    from ..sweep.executors import make_executor
    from ..sweep.refs import parse_elements, reference_energies

    if args.workers < 0:
        raise InputError(f"--workers must be 0 or more, got {args.workers}")
    symbols = parse_elements(args.elements)
    xcs = split_functionals(args.xc)
    rows = reference_energies(symbols, xcs, basis=args.basis, precision=args.precision,
                              executor=make_executor(workers=args.workers))
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

    where = (f"Gaussian basis {args.basis}" if args.basis
             else f"basis-set limit (radial solver, precision {args.precision})")
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

    out = [f"Reference atomic energies: spin-polarized ground states, {where}; ks1d {__version__}",
           line(head), line(["-" * w for w in widths])]
    out += [line(b) for b in body]
    libxc = {r.xc: r.libxc for r in rows}
    out.append("functionals: " + "; ".join(f"{k} = {v}" for k, v in libxc.items()))
    if rows:
        out.append(f"error estimate: {rows[0].error_kind}")
    return "\n".join(out)
