"""The report's content: which tables, figures and words, from the plan and the analysed results."""
from __future__ import annotations

from collections.abc import Sequence

from ..quantities import fmt, quantity
from ..sweep.output.collect import ResultRow
from ..xc import resolve_functional
from . import figures
from .analysis import RANKED, ReportData
from .document import Bullets, Cell, Document, Figure, Section, Table
from .plan import ReportPlan

#: The report's quantity sections, in page order: per element, then per diatomic.
ATOM_SECTIONS = ("ionisation_potential", "electron_affinity", "sd_promotion", "sp_promotion", "homo_vs_ip",
                 "spin_polarization_energy", "basis_set_error")
DIATOMIC_SECTIONS = ("bond_length", "harmonic_frequency", "dissociation_energy")

#: What each section's numbers are and which experiment they are compared with (the report's own prose;
#: units, titles and decimals come from ks1d.quantities).
EXPLAIN = {
    "ionisation_potential": "IP = E(X⁺) − E(X), each atom spin-polarized and spherical at the basis-set limit "
                            "(radial solver). Experiment: NIST Atomic Spectra Database via mendeleev.",
    "electron_affinity": "EA = E(X) − E(X⁻) (ΔSCF, radial solver, anions in a 20-bohr box). Experiment: CRC "
                         "Handbook / Andersen, Haugen, Hotop (1999) via mendeleev. Elements without a bound anion "
                         "in experiment are not compared. ⚑ marks values with a caveat (see Flags).",
    "sd_promotion": "E(dⁿ⁺¹s¹) − E(dⁿs²), both configurations spherically averaged and high spin. Experiment: "
                    "J-averaged values of Raghavachari & Trucks (1989) from Moore's tables (from memory).",
    "sp_promotion": "E(ns¹npᵏ⁺¹) − E(ns²npᵏ), both configurations spherically averaged and high spin (for B, C, "
                    "N and Si single terms: ²P→⁴P, ³P→⁵S, ⁴S→⁴P, ³P→⁵S). Experiment: J-averaged term energies of the "
                    "NIST Atomic Spectra Database (from memory).",
    "homo_vs_ip": "For the exact functional −ε_HOMO equals the IP (ionisation-potential theorem); the gap "
                  "(−ε_HOMO − IP, typically −3 to −6 eV for semilocal functionals) measures the self-interaction "
                  "error of the potential. Not part of the ranking.",
    "spin_polarization_energy": "E_restricted − E_polarized of the neutral atom (zero for closed shells): how much "
                                "the functional gains from spin polarization. No experimental counterpart; "
                                "large spreads between functionals warn that magnetic energies will differ too.",
    "basis_set_error": "ΔE = E(planned basis) − E(radial basis-set limit) of each neutral atom, same functional "
                       "and spherical state. 1 kcal/mol per atom (1.594 mHa) is the usual tolerance (common "
                       "practice); much of this error cancels in energy differences that conserve the atoms.",
    "bond_length": "r_e where dE/dR = 0, in the diatomic basis: analytic energies and gradients at three or more "
                   "bond lengths (each SCF restarted from the previous density), interpolated by the Hermite "
                   "polynomial through them. Experiment: Huber & Herzberg (1979) via the NIST Chemistry WebBook "
                   "(from memory).",
    "harmonic_frequency": "ω_e = √(k/μ) with k = E″(r_e) from the same interpolant (most abundant isotopes). "
                          "Experiment: Huber & Herzberg (1979) (from memory).",
    "dissociation_energy": "D_0 = E(A) + E(B) − E(r_e) − ½ω_e, atoms and molecule in the same basis (UKS, integer "
                           "occupations, no counterpoise). Experiment: D_0 of Huber & Herzberg (1979) "
                           "(from memory).",
}

CAVEATS = (
    "Few comparisons: with a handful of elements, differences of a few hundredths of an eV between scores are "
    "not significant.",
    "Non-relativistic atoms: beyond krypton (Z > 36) scalar-relativistic shifts of IPs and s→d energies reach "
    "tenths of an eV, so the comparison mixes functional and relativistic error.",
    "Spherical, J-averaged atoms: experiment refers to J-resolved ground levels; multiplet and spin–orbit "
    "effects of order 0.1 eV remain in open p and d shells.",
    "Spherical versus symmetry-broken atoms: a production run with integer occupations lets open-shell atoms "
    "break spherical symmetry and lie lower — with PBE by 5–12 mHa for N⁺ and O, with r2SCAN by 23–28 mHa "
    "(measured against pyscf UKS). IPs and EAs of open-p-shell atoms can thus differ by ~0.3 eV (GGA) and "
    "~0.7 eV (meta-GGA) from a symmetry-broken calculation; meta-GGA rankings are the most affected.",
    "Free atoms and diatomics only: the score says nothing direct about lattice constants, band gaps, surface "
    "or reaction energies; it is a first screen, not a verdict.",
    "Diatomic D_0 and r_e carry the error of the diatomic basis, the atomic quantities none (basis-set limit).",
)


def _cell(r: ResultRow | None, flagged: set[tuple[str, str, str]]) -> Cell:
    if r is None:
        return Cell("—", title="not computed or failed (see Skipped and failed)")
    text = fmt(r.value, r.quantity, signed=quantity(r.quantity).signed)
    if r.error is not None:
        text += f" ({fmt(r.error, r.quantity, signed=True)})"
    mark = "flag" if (r.system, r.functional, r.quantity) in flagged else None
    return Cell(text, link=f"job-{r.job[:12]}", title=f"stored job {r.job[:12]}", mark=mark)


def _quantity_table(data: ReportData, q: str, systems: Sequence[str], funcs: Sequence[str],
                    flagged: set[tuple[str, str, str]], extra: dict[str, str] | None = None) -> Table | None:
    rows = [r for r in data.rows if r.quantity == q]
    if not rows:
        return None
    unit = quantity(q).unit_text
    has_ref = any(r.reference is not None for r in rows)
    header = ("system",) + ((f"experiment ({unit})",) if has_ref else ()) + tuple(f"{f} ({unit})" for f in funcs)
    body = []
    for s in systems:
        srows = [r for r in rows if r.system == s]
        if not srows:
            continue
        ref = next((r.reference for r in srows if r.reference is not None), None)
        refcell = (Cell(fmt(ref, q) if ref is not None else (extra or {}).get(s, "—")),) if has_ref else ()
        best = min((abs(r.error) for r in srows if r.error is not None), default=None)
        cells = []
        for f in funcs:
            r = next((r for r in srows if r.functional == f), None)
            c = _cell(r, flagged)
            if r is not None and best is not None and r.error is not None and abs(r.error) == best and len(funcs) > 1:
                c = Cell(c.text, c.link, c.title, c.mark or "best")
            cells.append(c)
        body.append((s,) + refcell + tuple(cells))
    cap = f"value ({'computed − experiment' if has_ref else 'no experimental reference'}), {unit}"
    if has_ref:
        cap += "; bold: smallest |error| in the row"
    return Table(header, tuple(body), caption=cap)


def _ranking_section(plan: ReportPlan, data: ReportData) -> Section:
    cols = [q for q in RANKED + ("homo_vs_ip", "bond_length") if any(q in e.mae for e in data.ranking)]
    header = ("rank", "functional", "kind", "score: pooled MAE (eV)", "N") + tuple(
        f"MAE {quantity(q).short} ({quantity(q).unit_text})" for q in cols) + ("note",)
    body = []
    for e in data.ranking:
        f = resolve_functional(e.functional)
        body.append((str(e.rank) if e.rank else "—", e.functional, f.kind,
                     "—" if e.score is None else f"{e.score:.3f}", str(e.n))
                    + tuple(f"{fmt(e.mae[q][0], q)} ({e.mae[q][1]})" if q in e.mae else "—" for q in cols)
                    + (e.note,))
    n_common = len(data.common)
    parts = ", ".join(f"{sum(1 for c in data.common if c[0] == q)} {quantity(q).short}" for q in RANKED
                      if any(c[0] == q for c in data.common))
    blocks: list = []
    ranked = [e for e in data.ranking if e.rank]
    if ranked:
        best = ranked[0]
        blocks.append(f"Best on this element set: {best.functional} (pooled MAE {best.score:.3f} eV over "
                      f"{n_common} comparisons with experiment). The worst ranked: {ranked[-1].functional} "
                      f"({ranked[-1].score:.3f} eV).")
    else:
        blocks.append("No functional could be ranked: no comparison with experiment was completed.")
    blocks.append(Table(header, tuple(body), caption="MAE columns use every comparison a functional completed "
                                                    "(count in parentheses); the score uses the common set only"))
    blocks.append(f"Metric: the mean absolute error, in eV, over the energy comparisons with experiment that every "
                  f"ranked functional completed ({parts or 'none'}). A comparison one ranked functional lacks is "
                  f"dropped for all ({len(data.dropped)} dropped). Functionals with fewer than three quarters of "
                  "the comparisons of the best-covered one are listed but not ranked. −ε_HOMO, spin polarization, "
                  "r_e, ω_e and basis-set errors are not part of the score.")
    blocks.append("Caveats:")
    caveats = CAVEATS if not plan.symmetry_broken else tuple(
        c if not c.startswith("Spherical versus symmetry-broken") else
        (f"Symmetry breaking: IPs and EAs here refer to integer-occupation atoms (correction computed in "
         f"{plan.symmetry_broken}); s→d, s→p, −ε_HOMO and spin polarization still refer to spherical atoms.")
        for c in CAVEATS)
    blocks.append(Bullets(caveats))
    png = figures.ranking_figure(data.ranking)
    if png:
        blocks.append(Figure("ranking", "Pooled MAE against experiment per ranked functional (eV)", png))
    return Section("Ranking of the functionals", "ranking", tuple(blocks))


def _flags_section(plan: ReportPlan, data: ReportData) -> Section:
    blocks: list = []
    if plan.skipped:
        blocks.append(Table(("functional", "not computed", "why"),
                            tuple((s.functional, s.part, s.reason) for s in plan.skipped),
                            caption="parts of the battery a solver cannot do"))
    if plan.pairs_without_data:
        blocks.append("Bonded pairs in the structure with no experimental diatomic data in ks1d (not computed): "
                      + ", ".join(plan.pairs_without_data) + ".")
    unbound = [f for f in data.flags if f.kind == "unbound anion"]
    # one row per distinct flag (a flag that concerns several quantities of a job is listed once)
    others = list({(f.system, f.functional, f.kind, f.text): f for f in data.flags
                   if f.kind != "unbound anion"}.values())
    if unbound:
        body = []
        for system in dict.fromkeys(f.system for f in unbound):
            fs = [f for f in unbound if f.system == system]
            eps = "; ".join(f"{f.functional} {f.value:+.2f} eV" for f in fs)
            body.append((system, Cell(", ".join(f.functional for f in fs), link=f"job-{fs[0].job[:12]}"), eps))
        blocks.append("Unbound anions: the anion's highest occupied eigenvalue is positive, so the extra "
                      "electron is not bound by the functional's Kohn–Sham potential (the self-interaction "
                      "failure of approximate functionals for anions). The ΔSCF EA is still computed, with the "
                      "electron confined by the radial box (r_max = 20 bohr); it is flagged ⚑ in the EA table.")
        blocks.append(Table(("system", "functionals", "anion ε_HOMO"), tuple(body),
                            caption="positive anion eigenvalues per functional"))
    if others:
        blocks.append(Table(("system", "functional", "flag", "detail"),
                            tuple((f.system, f.functional, Cell(f.kind, link=f"job-{f.job[:12]}"), f.text)
                                  for f in others), caption="⚑ in the tables points here"))
    if not blocks:
        blocks.append("Nothing was skipped, failed or flagged.")
    return Section("Skipped, failed and flagged", "flags", tuple(blocks))


def _provenance_section(plan: ReportPlan, data: ReportData, store_path: str, sweep_name: str) -> Section:
    blocks: list = [f"Every number above links to the stored job it comes from. Store: {store_path} (SQLite), "
                    f"sweep name '{sweep_name}'; list it with 'ks1d sweep status --store {store_path}'. "
                    "A job's key is the SHA-256 of its inputs and the ks1d version; its row holds every solver "
                    "call with its total energy."]
    body = []
    ids = []
    for j in data.jobs:
        calls = "; ".join(f"{c.get('label')}: {c.get('total_energy'):.6f}" for c in j.calculations
                          if c.get("total_energy") is not None)
        body.append((j.key[:12], j.property, j.system, j.functional, j.status,
                     "" if j.seconds is None else f"{j.seconds:.1f}", calls or (j.error or "")[:200]))
        ids.append(f"job-{j.key[:12]}")
    blocks.append(Table(("job", "kind", "system", "functional", "status", "time (s)",
                         "solver calls: total energy (hartree)"), tuple(body), row_ids=tuple(ids)))
    sources = {}
    for r in data.rows:
        if r.reference_source:
            sources[r.reference_source] = r.reference_from_memory
    if sources:
        blocks.append("Experimental references used:")
        blocks.append(Bullets(tuple(f"{s}{' (value recalled from memory)' if m else ''}"
                                    for s, m in sources.items())))
    return Section("Provenance", "provenance", tuple(blocks))


def build_document(plan: ReportPlan, data: ReportData, meta: Sequence[tuple[str, str]], store_path: str,
                   sweep_name: str) -> Document:
    flagged = {(f.system, f.functional, f.quantity) for f in data.flags if f.kind != "SCF retried" and f.quantity}
    funcs = list(plan.functionals)
    sections = [_ranking_section(plan, data)]
    for q in ATOM_SECTIONS + DIATOMIC_SECTIONS:
        systems = list(plan.elements) if q in ATOM_SECTIONS else list(plan.diatomics)
        extra = data.anion_statements if q == "electron_affinity" else None
        t = _quantity_table(data, q, systems, funcs, flagged, extra)
        if t is None:
            continue
        explain = EXPLAIN[q]
        if plan.symmetry_broken and q in ("ionisation_potential", "electron_affinity"):
            explain += (f" Here for integer-occupation (symmetry-broken) atoms: each spherical radial energy plus "
                        f"the symmetry-breaking energy E(integer) − E(spherical) of the same species in "
                        f"{plan.symmetry_broken}.")
        blocks: list = [explain, t]
        rows = [r for r in data.rows if r.quantity == q]
        use_err = any(r.error is not None for r in rows)
        heading, unit = quantity(q).heading, quantity(q).unit_text
        png = figures.grouped_bars(rows, heading, use_errors=use_err)
        if png:
            what = "error against experiment" if use_err else "values"
            blocks.append(Figure(q, f"{heading}: {what} ({unit})", png))
        sections.append(Section(f"{heading} ({unit})", q, tuple(blocks)))
    sections.append(_flags_section(plan, data))
    sections.append(_provenance_section(plan, data, store_path, sweep_name))
    notice = ("These are numerical model results for research use. Validate them against experiment or "
              "higher-level theory before anything safety-relevant depends on them.")
    return Document(title=f"Functional sanity report: {' '.join(plan.elements)}", meta=tuple(meta),
                    notice=notice, sections=tuple(sections))
