"""The two configurations of an s→d or s→p promotion, derived from an atom's NIST ground configuration.

* s→d (transition metals): dⁿs² → dⁿ⁺¹s¹ with n = 1–9;
* s→p (p-block atoms): ns²npᵏ → ns¹npᵏ⁺¹ with k = 1–4.

Both configurations are then solved spherically averaged and high spin by the
radial solver; the promotion energy is E(upper) − E(lower).
"""
from __future__ import annotations

import re

from ... import elements
from ...errors import ConfigurationError, InputError

_L_OF = {"s": 0, "p": 1, "d": 2, "f": 3, "g": 4}


def expand_configuration(config: str) -> list[tuple[int, int, int]]:
    """'[Ar] 3d6 4s2' → [(1,0,2), (2,0,2), (2,1,6), ..., (3,2,6), (4,0,2)] as (n, l, occupation)."""
    text = config.strip()
    out: list[tuple[int, int, int]] = []
    m = re.match(r"^\[([A-Z][a-z]?)\]\s*(.*)$", text)
    if m:
        core = elements.CORES.get(m.group(1))
        if core is None:
            raise ConfigurationError(f"unknown core [{m.group(1)}] in configuration '{config}'")
        out.extend(expand_configuration(core))
        text = m.group(2)
    for tok in text.split():
        t = re.match(r"^(\d+)([spdfg])(\d+)$", tok)
        if not t:
            raise ConfigurationError(f"cannot read subshell '{tok}' in configuration '{config}'")
        out.append((int(t.group(1)), _L_OF[t.group(2)], int(t.group(3))))
    return out


def sd_configurations(symbol: str) -> tuple[str, str]:
    """(dⁿs², dⁿ⁺¹s¹) configurations of a d-block atom from its ground configuration."""
    ground = elements.element(symbol).ground_configuration
    core, _, rest = ground.partition("] ")
    if not ground.startswith("[") or not rest:
        raise InputError(f"{symbol} is not a d-block atom")
    shells = expand_configuration(ground)
    d = [s for s in shells if s[1] == 2]
    if not d:
        raise InputError(f"{symbol} has no d shell; s-d promotion applies to transition metals")
    nd = max(s[0] for s in d)
    ns = nd + 1
    toks = rest.split()
    d_occ = sum(int(t[len(f"{nd}d"):]) for t in toks if t.startswith(f"{nd}d"))
    s_occ = sum(int(t[len(f"{ns}s"):]) for t in toks if t.startswith(f"{ns}s"))
    others = [t for t in toks if not (t.startswith(f"{nd}d") or t.startswith(f"{ns}s"))]
    if any("p" in t for t in others):
        raise InputError(f"{symbol} has an open p shell; s-d promotion applies to transition metals")
    v = d_occ + s_occ
    if v < 3 or v > 11:
        raise InputError(f"{symbol}: s-d promotion needs 1-9 d electrons in the d^n s^2 configuration")
    pre = " ".join(others)
    pre = (pre + " ") if pre else ""
    a = f"{core}] {pre}{nd}d{v - 2} {ns}s2"
    b = f"{core}] {pre}{nd}d{v - 1} {ns}s1"
    return a, b


def sp_configurations(symbol: str) -> tuple[str, str]:
    """(ns² npᵏ, ns¹ npᵏ⁺¹) configurations of a p-block atom with 1 ≤ k ≤ 4, from its ground configuration."""
    ground = elements.element(symbol).ground_configuration
    core, _, rest = ground.partition("] ")
    toks = (rest if ground.startswith("[") else ground).split()
    if len(toks) < 2:
        raise InputError(f"{symbol} has no open p shell")
    s_tok, p_tok = toks[-2], toks[-1]
    n = s_tok[:-2] if s_tok.endswith("s2") else None
    if n is None or not n.isdigit() or not p_tok.startswith(f"{n}p"):
        raise InputError(f"{symbol}: s→p promotion needs a ground configuration ending in ns2 npk")
    k = int(p_tok[len(n) + 1:] or 1)
    if not 1 <= k <= 4:
        raise InputError(f"{symbol}: s→p promotion needs 1-4 p electrons")
    head = (core + "] " if ground.startswith("[") else "") + " ".join(toks[:-2])
    head = head.rstrip() + " " if head.strip() else ""
    return f"{head}{n}s2 {n}p{k}", f"{head}{n}s1 {n}p{k + 1}"
