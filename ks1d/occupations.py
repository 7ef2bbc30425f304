"""Electron configurations: parsing, charges and spin assignment.

A configuration is a list of sub-shells n l with an occupation per spin.
String syntax (case-insensitive letters s p d f):

* ``"[Ar] 3d6 4s2"``        noble-gas core in brackets, then sub-shells
* ``"[Ne] 3s1.5 3p0.5"``    fractional occupations
* ``"1s2 2s(1,0) 2p(3,0)"`` explicit (up, down) occupations of a sub-shell

Sub-shells are spherically averaged: f electrons in n l are spread equally
over the 2l+1 m-sublevels of each spin, so the density is spherical.

Spin assignment when no explicit (up, down) pair is given:

* restricted: each spin carries half of every occupation;
* polarized: Hund's rule high spin within each open sub-shell — up to
  2l+1 electrons go up, the rest down (closed sub-shells split evenly);
* an integer 2S = N↑ − N↓ (``spin=2`` for a triplet): start from the
  high-spin assignment and turn electrons of the outermost open sub-shells
  down (or up) until N↑ − N↓ = 2S.

j-resolved sub-shells (four-component Dirac atoms, ``relativity="dirac"`` only):

* ``"[Xe] 4f14 5d10 6s2 6p1/2(1)"``   n, l letter, 2j "/2", electrons in parentheses;
  a sub-shell n l j holds at most 2j+1 electrons and j must be l ± 1/2
* ``"[Xe] 4f14 5d10 6s2 6p1/2(2) 6p3/2(0)"``   a j sub-shell listed with 0 electrons is
  solved (its orbital energy is reported) but empty; a j partner that is not listed at all
  is empty too
* a plain n l occupation (and every sub-shell of a bracketed core) is split j-averaged,
  in proportion 2j+1 over j = l − 1/2 and l + 1/2: ``6p3`` = ``6p1/2(1) 6p3/2(2)``
* an n l sub-shell is given either plainly or by its j parts, not both

Ions derived from a neutral configuration: a cation loses electrons from the
outermost sub-shell (largest n, then largest l), e.g. Fe⁺ = [Ar] 3d6 4s1;
an anion gains them in its open sub-shell, or in the next sub-shell in
Madelung (n + l, then n) order.  Pass an explicit configuration for any
other choice.
"""
from __future__ import annotations

import re
from dataclasses import dataclass

from .elements import CORES, element
from .errors import ConfigurationError, SpinError

L_LETTERS = "spdf"
_TOL = 1e-10
#: the most negative atomic charge ks1d accepts (free atomic anions beyond −1 are unbound; −2 and −3
#: are still solved in the anion confinement box for embedding-type studies)
MIN_CHARGE = -3.0


@dataclass(frozen=True)
class Shell:
    """A sub-shell n l with occupations per spin (electrons, not fractions)."""

    n: int
    l: int
    up: float
    down: float

    @property
    def capacity_per_spin(self) -> int:
        return 2 * self.l + 1

    @property
    def occupation(self) -> float:
        return self.up + self.down

    @property
    def label(self) -> str:
        return f"{self.n}{L_LETTERS[self.l]}"

    def __str__(self) -> str:
        return f"{self.label}{_fmt(self.occupation)}"


def _fmt(x: float) -> str:
    return f"{x:g}" if abs(x - round(x)) > _TOL else str(int(round(x)))


@dataclass(frozen=True)
class Configuration:
    """Shells in canonical (n, l) order; ``polarized`` says whether up ≠ down is allowed."""

    shells: tuple[Shell, ...]
    polarized: bool

    @property
    def n_electrons(self) -> float:
        return sum(s.occupation for s in self.shells)

    @property
    def n_up(self) -> float:
        return sum(s.up for s in self.shells)

    @property
    def n_down(self) -> float:
        return sum(s.down for s in self.shells)

    @property
    def max_l(self) -> int:
        return max(s.l for s in self.shells)

    def label(self) -> str:
        """Configuration string, e.g. '1s2 2s2 2p4'; polarized open shells as '2p(3,1)'."""
        out = []
        for s in self.shells:
            if self.polarized and abs(s.up - s.down) > _TOL and s.occupation < 2 * s.capacity_per_spin - _TOL:
                out.append(f"{s.label}({_fmt(s.up)},{_fmt(s.down)})")
            else:
                out.append(str(s))
        return " ".join(out)

    def __str__(self) -> str:
        return self.label()


_J_TOKEN = re.compile(r"^(\d+)([spdfSPDF])(\d+)/2\(\s*([0-9.eE+-]+)\s*\)$")
_TOKEN = re.compile(r"^(\d+)([spdfSPDF])(?:\(\s*([0-9.eE+-]+)\s*,\s*([0-9.eE+-]+)\s*\)|([0-9.eE+-]*))$")


def parse_shells(text: str) -> dict[tuple[int, int], tuple[float, float | None]]:
    """Parse a configuration string into {(n, l): (total, up-or-None)}.

    j-resolved sub-shells (``6p1/2(1)``) are refused here: they exist only for
    four-component Dirac atoms (:func:`build_dirac_configuration`).
    """
    shells, jshells = _parse(text)
    if jshells:
        (n, l, j2), occ = next(iter(jshells.items()))
        raise ConfigurationError(
            f"j-resolved sub-shell '{n}{L_LETTERS[l]}{j2}/2({_fmt(occ)})' in '{text}' needs relativity='dirac' "
            f"(the other Hamiltonians have no spin-orbit splitting); write the n l total instead, e.g. "
            f"'{n}{L_LETTERS[l]}{_fmt(occ)}'"
        )
    return shells


def _parse(text: str):
    """({(n, l): (total, up-or-None)}, {(n, l, 2j): electrons}) of a configuration string."""
    if not isinstance(text, str) or not text.strip():
        raise ConfigurationError(f"configuration must be a non-empty string, got {text!r}")
    shells: dict[tuple[int, int], tuple[float, float | None]] = {}
    tokens = text.replace(",", " , ").split()
    # re-join explicit pairs like "2p(3" "," "1)" that the split separated
    joined, buf = [], ""
    for tok in tokens:
        if buf:
            buf += tok
            if ")" in tok:
                joined.append(buf)
                buf = ""
        elif "(" in tok and ")" not in tok:
            buf = tok
        elif tok == ",":
            raise ConfigurationError(f"unexpected ',' in configuration '{text}'")
        else:
            joined.append(tok)
    if buf:
        raise ConfigurationError(f"unclosed '(' in configuration '{text}'")
    jshells: dict[tuple[int, int, int], float] = {}
    for tok in joined:
        m_j = _J_TOKEN.match(tok)
        if m_j:
            n, l, j2 = int(m_j.group(1)), L_LETTERS.index(m_j.group(2).lower()), int(m_j.group(3))
            label = f"{n}{L_LETTERS[l]}{j2}/2"
            if n < l + 1:
                raise ConfigurationError(f"sub-shell '{n}{L_LETTERS[l]}' does not exist (needs n ≥ l + 1) in '{text}'")
            if j2 not in (2 * l - 1, 2 * l + 1) or j2 < 1:
                allowed = " or ".join(f"{x}/2" for x in (2 * l - 1, 2 * l + 1) if x > 0)
                raise ConfigurationError(f"'{tok}' in '{text}': a {L_LETTERS[l]} sub-shell has j = {allowed}")
            try:
                occ = float(m_j.group(4))
                if occ < 0:
                    raise ValueError
            except ValueError:
                raise ConfigurationError(f"bad occupation in '{tok}' of configuration '{text}'") from None
            if occ > j2 + 1 + _TOL:
                raise ConfigurationError(f"{label} holds at most 2j+1 = {j2 + 1} electrons, configuration "
                                         f"'{text}' puts {_fmt(occ)} there")
            if (n, l, j2) in jshells:
                raise ConfigurationError(f"sub-shell {label} appears twice in configuration '{text}'")
            jshells[(n, l, j2)] = occ
            continue
        m_core = re.fullmatch(r"\[(\w+)\]", tok)
        if m_core:
            core = m_core.group(1).capitalize()
            if core not in CORES:
                raise ConfigurationError(
                    f"unknown core '[{m_core.group(1)}]' in '{text}'; "
                    f"cores are {', '.join('[' + c + ']' for c in CORES)}"
                )
            for key, val in _parse(CORES[core])[0].items():
                _add(shells, key, val, text)
            continue
        m = _TOKEN.match(tok)
        if not m:
            raise ConfigurationError(
                f"cannot read '{tok}' in configuration '{text}'; write sub-shells as e.g. '3d6', '2p0.5' or '2p(3,1)'"
            )
        n, letter = int(m.group(1)), m.group(2).lower()
        l = L_LETTERS.index(letter)
        if n < l + 1:
            raise ConfigurationError(f"sub-shell '{n}{letter}' does not exist (needs n ≥ l + 1) in '{text}'")
        try:
            if m.group(3) is not None:
                up, dn = float(m.group(3)), float(m.group(4))
                val: tuple[float, float | None] = (up + dn, up)
                if up < 0 or dn < 0:
                    raise ValueError
            else:
                occ = float(m.group(5)) if m.group(5) else 1.0
                if occ < 0:
                    raise ValueError
                val = (occ, None)
        except ValueError:
            raise ConfigurationError(f"bad occupation in '{tok}' of configuration '{text}'") from None
        _add(shells, (n, l), val, text)
    for n, l, _ in jshells:
        if (n, l) in shells:
            raise ConfigurationError(f"sub-shell {n}{L_LETTERS[l]} is given both as a whole and by its j parts in "
                                     f"'{text}'; give one of them")
    return shells, jshells


def _add(shells, key, val, text):
    if key in shells:
        n, l = key
        raise ConfigurationError(f"sub-shell {n}{L_LETTERS[l]} appears twice in configuration '{text}'")
    shells[key] = val


def _check_capacity(shells, text):
    for (n, l), (occ, up) in shells.items():
        cap = 2 * (2 * l + 1)
        if occ > cap + _TOL:
            raise ConfigurationError(
                f"{n}{L_LETTERS[l]} holds at most {cap} electrons, configuration '{text}' puts {_fmt(occ)} there"
            )
        if up is not None and (up > cap / 2 + _TOL or occ - up > cap / 2 + _TOL):
            raise ConfigurationError(
                f"{n}{L_LETTERS[l]} holds at most {cap // 2} electrons per spin, configuration '{text}' asks "
                f"({_fmt(up)},{_fmt(occ - up)})"
            )


def _madelung_order(n_max: int = 8):
    keys = [(n, l) for n in range(1, n_max + 1) for l in range(min(n, 4))]
    return sorted(keys, key=lambda k: (k[0] + k[1], k[0]))


def _ionise(shells: dict, charge: float, label: str) -> dict:
    """Remove (charge > 0) or add (charge < 0) electrons per the module rules."""
    shells = {k: v[0] for k, v in shells.items()}
    remaining = float(charge)
    while remaining > _TOL:
        occupied = [k for k, v in shells.items() if v > _TOL]
        if not occupied:
            raise ConfigurationError(f"charge {charge:+g} leaves {label} without electrons")
        k = max(occupied)  # largest n, then largest l
        take = min(remaining, shells[k])
        shells[k] -= take
        remaining -= take
        if shells[k] <= _TOL:
            del shells[k]
    while remaining < -_TOL:
        open_ = [k for k, v in shells.items() if v < 2 * (2 * k[1] + 1) - _TOL]
        if open_:
            k = max(open_, key=lambda q: (q[0] + q[1], q[0]))
        else:
            order = _madelung_order()
            last = max((order.index(k) for k in shells), default=-1)
            if last + 1 >= len(order):
                raise ConfigurationError(f"charge {charge:+g} puts more electrons on {label} than the sub-shells up "
                                         f"to {order[-1][0]}{L_LETTERS[order[-1][1]]} hold")
            k = order[last + 1]
        cap = 2 * (2 * k[1] + 1)
        give = min(-remaining, cap - shells.get(k, 0.0))
        shells[k] = shells.get(k, 0.0) + give
        remaining += give
    return {k: (v, None) for k, v in shells.items()}


def _checked_charge(el, charge) -> float:
    """The charge as a float; ConfigurationError for a non-number, a non-finite value or no electrons left."""
    try:
        charge = float(charge)
    except (TypeError, ValueError):
        raise ConfigurationError(f"charge must be a number, got {charge!r}") from None
    if charge != charge or charge in (float("inf"), float("-inf")):
        raise ConfigurationError(f"charge must be a finite number, got {charge}")
    if el.Z - charge <= _TOL:
        raise ConfigurationError(f"charge {charge:+g} leaves {el.symbol} without electrons")
    return charge


def check_anion_charge(symbol: str, charge: float) -> None:
    """Refuse interacting atomic anions beyond MIN_CHARGE (they are unbound; the box would decide)."""
    if charge < MIN_CHARGE:
        raise ConfigurationError(
            f"charge {charge:+g} is below {MIN_CHARGE:+g}: ks1d solves atomic anions up to {-MIN_CHARGE:g} extra "
            f"electrons (in a confinement box); more highly charged atomic anions such as {symbol}{charge:+g} "
            "are unbound")


def build_configuration(Z: int, charge: float = 0.0, spin: str | int = "polarized",
                        config: str | None = None) -> Configuration:
    """The configuration of element Z with the given charge and spin treatment.

    ``config`` overrides the ground-state configuration; its electron count
    must then equal Z − charge.
    """
    el = element(Z)
    charge = _checked_charge(el, charge)
    if config is None:
        shells = parse_shells(el.ground_configuration)
        if charge != 0:
            shells = _ionise(shells, charge, el.symbol)
        text = el.ground_configuration
    else:
        shells = parse_shells(config)
        text = config
    _check_capacity(shells, text)
    shells = {k: v for k, v in shells.items() if v[0] > _TOL}
    if not shells:
        raise ConfigurationError(f"configuration '{text}' has no electrons")
    n_el = sum(v[0] for v in shells.values())
    if abs(n_el - (el.Z - charge)) > 1e-8:
        raise ConfigurationError(
            f"configuration '{text}' holds {_fmt(n_el)} electrons but {el.symbol} with charge "
            f"{charge:+g} has {_fmt(el.Z - charge)}"
        )
    explicit = any(v[1] is not None for v in shells.values())
    if explicit and spin == "restricted":
        raise SpinError(
            f"configuration '{text}' gives explicit (up, down) occupations, which contradicts spin='restricted'"
        )
    if spin == "restricted":
        out = [Shell(n, l, occ / 2, occ / 2) for (n, l), (occ, _) in sorted(shells.items())]
        return Configuration(tuple(out), polarized=False)
    if spin != "polarized" and not (isinstance(spin, (int, float)) and not isinstance(spin, bool)):
        raise SpinError(f"spin must be 'polarized', 'restricted' or an integer 2S = N_up - N_down, got {spin!r}")
    out = {}
    for (n, l), (occ, up) in sorted(shells.items()):
        cap = 2 * l + 1
        if up is None:
            up = min(occ, cap) if occ < 2 * cap - _TOL else occ / 2
        out[(n, l)] = [up, occ - up]
    if spin != "polarized":
        _set_spin(out, float(spin), text, explicit)
    shells_t = tuple(Shell(n, l, u, d) for (n, l), (u, d) in sorted(out.items()))
    return Configuration(shells_t, polarized=True)


def _set_spin(out: dict, two_s: float, text: str, explicit: bool) -> None:
    """Flip electrons between spins, outermost open sub-shells first, to reach N↑ − N↓ = 2S."""
    n_tot = sum(u + d for u, d in out.values())
    if abs(two_s) > n_tot + _TOL:
        raise SpinError(f"2S = {two_s:g} exceeds the {_fmt(n_tot)} electrons of '{text}'")
    if abs((n_tot - two_s) / 2 - round((n_tot - two_s) / 2)) > _TOL and abs(n_tot - round(n_tot)) < _TOL:
        raise SpinError(f"2S = {two_s:g} has the wrong parity for {_fmt(n_tot)} electrons")
    diff = sum(u - d for u, d in out.values()) - two_s
    if explicit and abs(diff) > _TOL:
        raise SpinError(f"explicit occupations of '{text}' give 2S = {two_s + diff:g}, not the requested {two_s:g}")
    for key in sorted(out, reverse=True):
        if abs(diff) <= _TOL:
            break
        u, d = out[key]
        cap = 2 * key[1] + 1
        move = min(diff / 2, u, cap - d) if diff > 0 else max(diff / 2, -d, -(cap - u))
        out[key] = [u - move, d + move]
        diff -= 2 * move
    if abs(diff) > _TOL:
        raise SpinError(f"2S = {two_s:g} cannot be reached within the sub-shells of '{text}'")


def ground_state_multiplicity(key, charge: int = 0) -> int:
    """2S+1 of the spin-polarized radial ground state of an atom or atomic ion.

    2S = N↑ − N↓ of :func:`ks1d.occupations.build_configuration` (Hund's
    first rule per open sub-shell; ions by its ionisation rules), so a
    Gaussian-basis run of the atom has the same spin as the radial one.
    """
    el = element(key)
    if el.Z - charge == 0:
        return 1
    cfg = build_configuration(el.Z, charge, "polarized")
    two_s = cfg.n_up - cfg.n_down
    if abs(two_s - round(two_s)) > 1e-8:
        raise SpinError(f"{el.symbol} (charge {charge:+d}) has a fractional ground-state spin 2S = {two_s:g}")
    return int(round(abs(two_s))) + 1


# ---------------------------------------------------------------- j-resolved (Dirac) configurations
@dataclass(frozen=True)
class SpinorShell:
    """A relativistic sub-shell n l j (j = j2/2) holding ``occupation`` electrons (at most 2j+1)."""

    n: int
    l: int
    j2: int
    occupation: float

    @property
    def kappa(self) -> int:
        """κ = −(l+1) for j = l + 1/2, +l for j = l − 1/2."""
        return -(self.l + 1) if self.j2 == 2 * self.l + 1 else self.l

    @property
    def capacity(self) -> int:
        return self.j2 + 1

    @property
    def label(self) -> str:
        return f"{self.n}{L_LETTERS[self.l]}{self.j2}/2"

    def __str__(self) -> str:
        return f"{self.label}({_fmt(self.occupation)})"


@dataclass(frozen=True)
class DiracConfiguration:
    """j-resolved sub-shells in canonical (n, l, j) order (spin-restricted by construction)."""

    shells: tuple[SpinorShell, ...]

    @property
    def n_electrons(self) -> float:
        return sum(s.occupation for s in self.shells)

    @property
    def max_l(self) -> int:
        return max(s.l for s in self.shells)

    def label(self) -> str:
        """e.g. '1s1/2(2) 2s1/2(2) 2p1/2(2) 2p3/2(4)'."""
        return " ".join(str(s) for s in self.shells)

    def __str__(self) -> str:
        return self.label()

    #: four-component atoms are spin-restricted
    polarized = False

    @property
    def n_up(self) -> float:
        return 0.5 * self.n_electrons

    @property
    def n_down(self) -> float:
        return 0.5 * self.n_electrons

    def scalar(self) -> Configuration:
        """The n l totals as a spin-restricted :class:`Configuration` (for densities and labels)."""
        tot: dict[tuple[int, int], float] = {}
        for s in self.shells:
            tot[(s.n, s.l)] = tot.get((s.n, s.l), 0.0) + s.occupation
        return Configuration(tuple(Shell(n, l, f / 2, f / 2) for (n, l), f in sorted(tot.items()) if f > _TOL),
                             polarized=False)


def j_average(n: int, l: int, occupation: float) -> list[SpinorShell]:
    """Split n l electrons over j = l ∓ 1/2 in proportion 2j+1 (2l and 2l+2 of 2(2l+1))."""
    if l == 0:
        return [SpinorShell(n, 0, 1, occupation)]
    g = 2 * (2 * l + 1)
    return [SpinorShell(n, l, 2 * l - 1, occupation * 2 * l / g),
            SpinorShell(n, l, 2 * l + 1, occupation * (2 * l + 2) / g)]


def build_dirac_configuration(Z: int, charge: float = 0.0, config: str | None = None) -> DiracConfiguration:
    """The j-resolved configuration of element Z (module docstring for the syntax).

    Without ``config`` the ground configuration (ionised by the module's rules) is
    split j-averaged; an explicit one must hold Z − charge electrons.
    """
    el = element(Z)
    charge = _checked_charge(el, charge)
    if config is None:
        shells = parse_shells(el.ground_configuration)
        if charge != 0:
            shells = _ionise(shells, charge, el.symbol)
        text, jshells = el.ground_configuration, {}
    else:
        shells, jshells = _parse(config)
        text = config
    _check_capacity(shells, text)
    for (_n, _l), (_occ, up) in shells.items():
        if up is not None:
            raise SpinError(f"configuration '{text}' gives explicit (up, down) occupations; four-component Dirac "
                            "atoms are spin-restricted (σ_z is not conserved), so give totals or j sub-shells")
    out = [sh for (n, l), (occ, _) in shells.items() if occ > _TOL for sh in j_average(n, l, occ)]
    out += [SpinorShell(n, l, j2, occ) for (n, l, j2), occ in jshells.items()]
    out.sort(key=lambda s: (s.n, s.l, s.j2))
    n_el = sum(s.occupation for s in out)
    if n_el <= _TOL:
        raise ConfigurationError(f"configuration '{text}' has no electrons")
    if abs(n_el - (el.Z - charge)) > 1e-8:
        raise ConfigurationError(
            f"configuration '{text}' holds {_fmt(n_el)} electrons but {el.symbol} with charge "
            f"{charge:+g} has {_fmt(el.Z - charge)}"
        )
    return DiracConfiguration(tuple(out))
