"""Pieces the sub-commands share: the basis option, progress lines on stderr, JSON/QCSchema output."""
from __future__ import annotations

import sys
from typing import TextIO

from ..errors import BasisError, InputError
from ..serialize import dumps

BASIS_HELP = ("basis name or file, or a per-element mapping such as 'O=cc-pvtz,default=def2-svp' "
              "(elements without an entry take 'default')")


def parse_basis(text: str):
    """A basis option: a name/file, or ``El=name,...[,default=name]`` → dict."""
    if text is None:
        return None
    s = str(text).strip()
    if not s:
        raise BasisError("the basis option is empty")
    if "=" not in s:
        return s
    from ..elements import element

    mapping = {}
    for part in s.split(","):
        key, sep, value = part.partition("=")
        key, value = key.strip(), value.strip()
        if not sep or not key or not value:
            raise BasisError(f"basis mapping entry {part.strip()!r} is not ELEMENT=BASIS (e.g. 'O=cc-pvtz')")
        if key.lower() == "default":
            name = "default"
        else:
            try:
                name = element(key).symbol
            except InputError:
                raise BasisError(f"basis mapping entry {part.strip()!r}: {key!r} is not an element symbol "
                                 "or 'default'") from None
        if name in mapping:
            raise BasisError(f"basis mapping names {name} twice")
        mapping[name] = value
    return mapping


def basis_label(basis) -> str:
    if isinstance(basis, dict):
        return ",".join(f"{k}={v}" for k, v in basis.items())
    return str(basis)


class ProgressLine:
    """One progress line on stderr: rewritten in place on a terminal, one line per update otherwise.

    Disabled with ``enabled=False`` (the commands' ``--quiet``).  Output on stdout stays clean
    for ``--json`` and pipes.
    """

    def __init__(self, label: str, enabled: bool = True, stream: TextIO | None = None):
        self.label = label
        self.stream = stream or sys.stderr
        self.enabled = enabled
        self.tty = bool(getattr(self.stream, "isatty", lambda: False)())
        self._width = 0

    def update(self, text: str) -> None:
        if not self.enabled:
            return
        line = f"ks1d {self.label}: {text}"
        if self.tty:
            pad = max(self._width - len(line), 0)
            self.stream.write("\r" + line + " " * pad)
            self._width = len(line)
        else:
            self.stream.write(line + "\n")
        self.stream.flush()

    def scf(self, record) -> None:
        """Progress callback for the solvers: one SCF iteration."""
        de = "" if record.delta_energy != record.delta_energy else f", |dE| {abs(record.delta_energy):.1e}"
        self.update(f"SCF iteration {record.iteration}: E = {record.energy:.8f} Ha{de}, "
                    f"residual {record.residual:.1e}")

    def close(self) -> None:
        if self.enabled and self.tty and self._width:
            self.stream.write("\r" + " " * self._width + "\r")
            self.stream.flush()


def add_output_options(p, qcschema: bool = False) -> None:
    p.add_argument("--json", action="store_true", help="print one JSON object (the result's fields)")
    if qcschema:
        p.add_argument("--qcschema", metavar="PATH", default=None,
                       help="write the result as QCSchema (qcschema_output) JSON to PATH ('-' for stdout)")
    p.add_argument("--quiet", action="store_true", help="no progress lines on stderr")


def check_writable(path: str | None) -> None:
    """Refuse an output path whose directory does not exist, before any computation."""
    import os

    if path is None or path == "-":
        return
    folder = os.path.dirname(os.path.abspath(path))
    if not os.path.isdir(folder):
        raise InputError(f"cannot write '{path}': the directory '{folder}' does not exist")
    if os.path.isdir(path):
        raise InputError(f"cannot write '{path}': it is a directory")


def write_json_document(doc, path: str) -> None:
    """Strict JSON to ``path`` (or stdout for '-')."""
    text = dumps(doc, indent=1) + "\n"
    if path == "-":
        sys.stdout.write(text)
        return
    with open(path, "w", encoding="utf-8") as fh:
        fh.write(text)
