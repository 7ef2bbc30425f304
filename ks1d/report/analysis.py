"""From stored jobs to what the report says: values against experiment, flags, the ranking.

The ranking metric is the pooled mean absolute error against experiment
over the energy comparisons of the battery, all in eV:

    score(F) = (1/N) Σ_i |E_i(F) − E_i(exp)|,   i ∈ common set

over ionisation potentials, electron affinities (elements with a bound
anion only), s→d and s→p promotion energies and diatomic D_0 — the comparisons
that every ranked functional completed (a comparison one of them lacks is
dropped for all, so each is scored on the same questions).  A functional
with fewer than three quarters of the comparisons of the best-covered one is
listed but not ranked, and so is one whose atoms come from Gaussian-basis
jobs (HSE06-type functionals, which have no radial atoms).
−ε_HOMO, spin-polarization energies, bond lengths, frequencies and
basis-set errors are shown beside the ranking but are not part of it.
"""
from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

from ..quantities import quantity
from ..sweep.engine.store import JobRow
from ..sweep.output.collect import FailureRow, ResultRow, collect
from ..sweep.properties.atom_survey import quantity_of_step
from ..units import HARTREE_TO_EV

#: Quantities pooled into the ranking score (all in eV).
RANKED = ("ionisation_potential", "electron_affinity", "sd_promotion", "sp_promotion", "dissociation_energy")
#: Shown beside the score: MAE of these per functional.
SIDE = ("homo_vs_ip", "bond_length", "harmonic_frequency")
if any(quantity(q).unit != "eV" for q in RANKED):  # pragma: no cover - the score pools eV
    raise RuntimeError("every ranked quantity must be an energy in eV")


@dataclass(frozen=True)
class Flag:
    """Something a reader should know about one value or job."""

    system: str
    functional: str
    kind: str
    text: str
    job: str
    quantity: str | None = None  # the quantity it concerns; None: the whole job
    value: float | None = None  # the number behind the flag, in eV (the anion's eigenvalue for "unbound anion")


@dataclass(frozen=True)
class RankEntry:
    """One functional's score; ``rank`` is None when it is not ranked (``note`` says why)."""

    functional: str
    score: float | None
    n: int
    mae: dict[str, tuple[float, int]]  # quantity → (MAE, N) over all of its comparisons
    rank: int | None
    note: str = ""


@dataclass(frozen=True)
class JobInfo:
    """What the provenance table shows for one stored job."""

    key: str
    system: str
    property: str
    functional: str
    status: str
    seconds: float | None
    calculations: tuple[dict[str, Any], ...]
    error: str | None


@dataclass(frozen=True)
class ReportData:
    rows: tuple[ResultRow, ...]
    failures: tuple[FailureRow, ...]
    flags: tuple[Flag, ...]
    ranking: tuple[RankEntry, ...]
    common: tuple[tuple[str, str], ...]  # (quantity, system) of the ranking's common set
    dropped: tuple[tuple[str, str], ...]  # comparisons not in the common set
    jobs: tuple[JobInfo, ...]
    anion_statements: dict[str, str] = field(default_factory=dict)

    def value(self, quantity: str, system: str, functional: str) -> ResultRow | None:
        for r in self.rows:
            if r.quantity == quantity and r.system == system and r.functional == functional:
                return r
        return None


def _mae(errors: Sequence[float]) -> float:
    return sum(abs(e) for e in errors) / len(errors)


def rank_functionals(rows: Sequence[ResultRow], functionals: Sequence[str], unranked: dict[str, str] | None = None):
    """(ranking entries, common set, dropped comparisons) — see the module docstring.

    ``unranked`` maps functionals that are listed but never ranked to the reason (their atoms come from
    another solver).
    """
    unranked = unranked or {}
    comp: dict[str, dict[tuple[str, str], float]] = {f: {} for f in functionals}
    for r in rows:
        if r.quantity in RANKED and r.error is not None and r.functional in comp:
            comp[r.functional][(r.quantity, r.system)] = r.error
    best = max((len(c) for f, c in comp.items() if f not in unranked), default=0)
    ranked = [f for f in functionals if f not in unranked and best and len(comp[f]) >= 0.75 * best]
    key = lambda t: (RANKED.index(t[0]), t[1])  # noqa: E731
    # sorted, so that the score's sum runs in one order whatever the process's string-hash seed
    common = sorted(set.intersection(*(set(comp[f]) for f in ranked)) if ranked else set(), key=key)
    every = set().union(*comp.values()) if comp else set()
    entries = []
    for f in functionals:
        per_q: dict[str, tuple[float, int]] = {}
        for q in RANKED + SIDE:
            errs = [r.error for r in rows if r.functional == f and r.quantity == q and r.error is not None]
            if errs:
                per_q[q] = (_mae(errs), len(errs))
        if f in ranked and common:
            score = _mae([comp[f][k] for k in common])
            entries.append(RankEntry(f, score, len(common), per_q, None))
        else:
            why = (unranked[f] if f in unranked else "no comparisons with experiment" if not comp[f] else
                   f"only {len(comp[f])} of the {best} comparisons the best-covered functional has")
            entries.append(RankEntry(f, None, len(comp[f]), per_q, None, note=f"not ranked: {why}"))
    order = sorted((e for e in entries if e.score is not None), key=lambda e: e.score)
    ranks = {e.functional: i + 1 for i, e in enumerate(order)}
    entries = [RankEntry(e.functional, e.score, e.n, e.mae, ranks.get(e.functional), e.note) for e in entries]
    entries.sort(key=lambda e: (e.rank is None, e.rank or 0))
    return tuple(entries), tuple(common), tuple(sorted(every - set(common), key=key))


def _flags(jr: JobRow) -> list[Flag]:
    out: list[Flag] = []
    if jr.status == "failed":
        first = (jr.error or "").strip().splitlines()[0] if jr.error else ""
        out.append(Flag(jr.system, jr.functional, "job failed", f"{jr.error_type}: {first}", jr.key))
        return out
    if not jr.outputs:
        return out
    d = jr.outputs.get("details", {})
    if jr.property == "atom_survey_basis":
        for q in ("ionisation_potential", "electron_affinity", "homo_vs_ip"):
            out.append(Flag(jr.system, jr.functional, "Gaussian atoms",
                            f"{d.get('atoms', 'Gaussian atoms')}: no radial range separation, so not at the "
                            "basis-set limit and not spherical", jr.key, q))
    if d.get("anion_unbound_orbital"):
        eps = d.get("anion_homo_energy")
        out.append(Flag(jr.system, jr.functional, "unbound anion",
                        f"the anion's highest occupied eigenvalue is {eps * HARTREE_TO_EV:+.2f} eV > 0: the extra "
                        "electron is not bound by this functional's potential, and the ΔSCF EA rests on the "
                        "finite radial box (r_max = 20 bohr)", jr.key, "electron_affinity", eps * HARTREE_TO_EV))
    ea = jr.outputs.get("values", {}).get("electron_affinity")
    if ea is not None and ea < 0:
        out.append(Flag(jr.system, jr.functional, "negative EA",
                        f"EA = {ea:+.3f} eV < 0: this functional does not bind the anion", jr.key,
                        "electron_affinity"))
    for step in d.get("failed_steps", []):
        out.append(Flag(jr.system, jr.functional, "step failed", f"{step['step']}: {step['error']}", jr.key,
                        quantity_of_step(step["step"])))
    for step in d.get("retried_steps", []):
        out.append(Flag(jr.system, jr.functional, "SCF retried",
                        f"{step}: converged only in the retry (slower mixing, density tolerance 1e-5)", jr.key,
                        quantity_of_step(step)))
    for step in d.get("relaxed_scf_steps", []):
        out.append(Flag(jr.system, jr.functional, "SCF tolerance relaxed",
                        f"{step['step']}: the SCF residual stalled with the energy converged, so the search ran to "
                        f"a residual of {step['residual_tolerance']:.0e}; force constant from the "
                        f"{step['note']}", jr.key, "harmonic_frequency"))
    for w in d.get("warnings", []):
        out.append(Flag(jr.system, jr.functional, "warning", w, jr.key,
                        "basis_set_error" if jr.property == "basis_set_error" else None))
    return out


def analyse(job_rows: Sequence[JobRow], functionals: Sequence[str], elements: Sequence[str]) -> ReportData:
    """Collect the stored rows of one report into :class:`ReportData`.

    Functionals whose atoms come from Gaussian-basis jobs (``atom_survey_basis``) are listed beside the
    ranking, not in it: their atoms are integer-occupation atoms in a finite basis, the others' are not.
    """
    from ..reference.data import has_stable_anion

    job_rows = list(job_rows)
    rows, failures = collect(job_rows)
    flags: list[Flag] = []
    infos: list[JobInfo] = []
    for jr in job_rows:
        flags.extend(_flags(jr))
        calcs = tuple((jr.outputs or {}).get("calculations", ()))
        infos.append(JobInfo(jr.key, jr.system, jr.property, jr.functional, jr.status, jr.seconds, calcs,
                             None if jr.status != "failed" else f"{jr.error_type}: {jr.error}"))
    unranked = {jr.functional: (f"atoms from Gaussian jobs ({(jr.settings or {}).get('basis')}, integer "
                                "occupations), not the basis-set limit: compare its MAE columns")
                for jr in job_rows if jr.property == "atom_survey_basis"}
    ranking, common, dropped = rank_functionals(rows, functionals, unranked)
    statements = {}
    for el in elements:
        stable = has_stable_anion(el)
        if stable is False:
            statements[el] = "no bound anion in experiment (EA not compared)"
    return ReportData(rows=tuple(rows), failures=tuple(failures), flags=tuple(flags), ranking=ranking,
                      common=common, dropped=dropped, jobs=tuple(infos), anion_statements=statements)
