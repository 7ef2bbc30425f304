"""``python -m ks1d.sweep ACTION ...`` — the same as ``ks1d sweep ACTION ...``."""
from __future__ import annotations

import sys


def main(argv: list[str] | None = None) -> int:
    from .. import cli
    from ..commands import sweep

    parser = cli._Parser(prog="ks1d", description="ks1d benchmark sweeps")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=cli._Parser)
    sweep.register(sub)
    args = parser.parse_args(["sweep", *(sys.argv[1:] if argv is None else argv)])
    from ..errors import CalculationError, InputError

    try:
        return int(args.func(args) or 0)
    except InputError as exc:
        print(f"ks1d: error: {exc}", file=sys.stderr)
        return 2
    except CalculationError as exc:
        print(f"ks1d: calculation failed: {exc}", file=sys.stderr)
        return 3
    except BrokenPipeError:  # output piped into e.g. head
        import os

        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
        return 0


if __name__ == "__main__":
    sys.exit(main())
