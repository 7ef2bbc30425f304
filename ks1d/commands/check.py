"""``ks1d check``: run the validation suite against the installed build.

    ks1d check                 quick suite, table
    ks1d check --full --json   every check, one JSON object

Exit code 0 if every check passes, 1 if any fails, 2 for bad input.
"""
from __future__ import annotations

import math

from ._common import ProgressLine


def register(subparsers) -> None:
    p = subparsers.add_parser(
        "check", help="validate this installation against reference data and pyscf",
        description="Compare ks1d with NIST LDA/LSD atomic energies, numerical Hartree-Fock limits, pyscf "
                    "(large even-tempered basis; same molecule, basis and grid) and experimental ionisation "
                    "potentials and electron affinities. Exit code 1 if any check fails.")
    lvl = p.add_mutually_exclusive_group()
    lvl.add_argument("--quick", dest="level", action="store_const", const="quick",
                     help="a representative subset (default; well under a minute)")
    lvl.add_argument("--full", dest="level", action="store_const", const="full", help="every check")
    p.add_argument("--xc", default="pbe", help="functional of the IP/EA checks (default: pbe)")
    p.add_argument("--group", action="append", metavar="NAME", default=None,
                   help="run only this group (repeatable): nist, hf_limit, radial_pyscf, gaussian_pyscf, "
                        "ip_pyscf, ip_ea, relativity")
    p.add_argument("--json", action="store_true", help="print one JSON object with a 'checks' list")
    p.add_argument("--quiet", action="store_true", help="no progress lines on stderr")
    p.set_defaults(func=run, level="quick")


def _num(x: float | None, unit: str) -> str:
    if x is None:
        return "-"
    if unit == "hartree":
        return f"{x:.7f}" if abs(x) >= 1e-3 or x == 0 else f"{x:.2e}"
    if unit == "e bohr":
        return f"{x:.1e}"
    return f"{x:.3f}"


def _dev(x: float | None, unit: str) -> str:
    if x is None:
        return "-"
    if unit in ("hartree", "e bohr"):
        return f"{x:+.1e}"
    return f"{x:+.3f}"


def _tol(c) -> str:
    fmt = (lambda v: f"{v:.0e}") if c.unit in ("hartree", "e bohr") else (lambda v: f"{v:.3f}")
    if c.lower is None and c.upper is None:
        return "±" + fmt(c.tolerance)
    def bound(v, infinite):
        if v is None or math.isinf(v):
            return infinite
        return f"{v:+.0e}" if c.unit == "hartree" else f"{v:+.3f}"

    lo, hi = bound(c.lower, "-inf"), bound(c.upper, "+inf")
    return f"[{lo}, {hi}]"


def format_table(suite) -> str:
    rows = [(c.name, _num(c.value, c.unit), _num(c.reference, c.unit), _dev(c.deviation, c.unit), _tol(c),
             c.unit, "pass" if c.passed else "FAIL") for c in suite.checks]
    head = ("check", "value", "reference", "deviation", "tolerance", "unit", "result")
    widths = [max(len(r[i]) for r in rows + [head]) for i in range(len(head))]
    align = ["<", ">", ">", ">", ">", "<", "<"]

    def line(r):
        return "  ".join(f"{v:{a}{w}}" for v, a, w in zip(r, align, widths)).rstrip()

    out = [line(head), "  ".join("-" * w for w in widths)]
    group = None
    for c, r in zip(suite.checks, rows):
        if c.group != group and group is not None:
            out.append("")
        group = c.group
        out.append(line(r))
    n_fail = len(suite.failed)
    out.append("")
    out.append(f"{len(suite.checks)} checks, {len(suite.checks) - n_fail} passed, {n_fail} failed "
               f"({suite.level}, {suite.seconds:.1f} s)")
    for c in suite.failed:
        out.append(f"FAILED {c.name}: {c.note or 'deviation outside tolerance'}  [source: {c.source}]")
    sources = []
    for c in suite.checks:
        if c.source not in sources:
            sources.append(c.source)
    out.append("")
    out.append("sources:")
    out += [f"  - {s}" for s in sources]
    return "\n".join(out)


def run(args) -> int:
    from ..validate.checks import run_suite

    groups = tuple(args.group) if args.group else None
    bar = ProgressLine("check", enabled=not args.quiet)
    state = {"group": ""}

    def on_group(i, n, g):
        state["group"] = f"group {i}/{n} ({g})"
        bar.update(f"{state['group']}: running")

    def progress(c):
        bar.update(f"{state['group']}: {'ok' if c.passed else 'FAIL'} {c.name}")

    try:
        suite = run_suite(args.level, xc=args.xc, groups=groups, progress=progress, on_group=on_group)
    finally:
        bar.close()
    if args.json:
        print(suite.to_json())
    else:
        print(format_table(suite))
    return 0 if suite.passed else 1
