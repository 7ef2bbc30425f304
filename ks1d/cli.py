"""The ``ks1d`` command line: argument parsing and printing only.

Each sub-command lives in :mod:`ks1d.commands` as a module exposing
``register(subparsers)``, which adds its parser and sets ``func`` to a
callable ``func(args) -> int``.  Input errors (:class:`ks1d.errors.InputError`)
print one clear line and exit with code 2; a failed SCF prints its diagnosis
and exits with code 3.
"""
from __future__ import annotations

import argparse
import importlib
import sys

from ._version import __version__
from .errors import CalculationError, InputError

COMMANDS = ("atom", "molecule", "report", "sweep", "refs", "check", "basis_error")


class _Parser(argparse.ArgumentParser):
    def error(self, message):  # argparse's own errors: one line, exit 2, like every other input error
        self.exit(2, f"ks1d: error: {message} (see '{self.prog} --help')\n")


def build_parser() -> argparse.ArgumentParser:
    parser = _Parser(prog="ks1d", description="All-electron Kohn-Sham DFT for atoms and small molecules.")
    parser.add_argument("--version", action="version", version=f"ks1d {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    for name in COMMANDS:
        try:
            mod = importlib.import_module(f"ks1d.commands.{name}")
        except ModuleNotFoundError as exc:  # a command whose module is not present
            if exc.name != f"ks1d.commands.{name}":
                raise
            continue
        mod.register(sub)
    return parser


def main(argv: list[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    if not getattr(args, "func", None):
        parser.print_help()
        return 2
    try:
        return int(args.func(args) or 0)
    except InputError as exc:
        print(f"ks1d: error: {exc}", file=sys.stderr)
        return 2
    except BrokenPipeError:  # output piped into e.g. head
        import os

        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
        return 0
    except OSError as exc:  # a file that cannot be read or written: the user's path, not a bug
        where = f" '{exc.filename}'" if getattr(exc, "filename", None) else ""
        print(f"ks1d: error: cannot access{where}: {exc.strerror or exc}", file=sys.stderr)
        return 2
    except CalculationError as exc:
        print(f"ks1d: calculation failed: {exc}", file=sys.stderr)
        return 3
    except KeyboardInterrupt:
        print("ks1d: interrupted", file=sys.stderr)
        return 130


if __name__ == "__main__":
    sys.exit(main())
