"""ks1d report: what the page says, against outside references (NIST via mendeleev, pyscf, NIST LSD)."""
from __future__ import annotations

import html
import re
import sqlite3

import pytest

from ks1d import units
from ks1d.report import functional_report
from ks1d.report.analysis import rank_functionals
from ks1d.sweep.engine.executors import InlineExecutor
from ks1d.sweep.output.collect import ResultRow


def _row(out, q, system, xc):
    r = out.data.value(q, system, xc)
    assert r is not None, (q, system, xc)
    return r


def test_hydrogen_ip_is_minus_the_nist_lsd_energy(small_report):
    # IP(H) = -E(H); NIST SRD 141 (Kotochigova et al., PRA 55, 191 (1997)) LSD E(H) = -0.478671 Ha (from memory)
    assert _row(small_report, "ionisation_potential", "H", "lda").value == pytest.approx(
        0.478671 * units.HARTREE_TO_EV, abs=3e-5)


def test_experimental_columns_are_the_nist_and_crc_values(small_report):
    # mendeleev (NIST ASD ionisation energies, CRC electron affinities) is the outside source of the reference column
    mendeleev = pytest.importorskip("mendeleev")
    for sym in ("H", "Li"):
        el = mendeleev.element(sym)
        ip = _row(small_report, "ionisation_potential", sym, "pbe")
        assert ip.reference == pytest.approx(el.ionenergies[1], abs=1e-6)
        assert ip.error == pytest.approx(ip.value - el.ionenergies[1], abs=1e-9)
        assert _row(small_report, "electron_affinity", sym, "pbe").reference == pytest.approx(
            el.electron_affinity, abs=1e-6)


@pytest.mark.parametrize("xc, pyscf_xc, tol", [
    ("lda", "lda,vwn", 2e-5),
    # PBE: ks1d's open-shell and Be-like GGA energies lie ~1e-5 Ha below pyscf's converged plateau (a known,
    # unexplained finding in DEVELOPERS.md); 5e-4 eV covers it and still catches any real battery error
    ("pbe", "pbe,pbe", 5e-4),
])
def test_lithium_ip_and_homo_match_pyscf(small_report, xc, pyscf_xc, tol):
    # pyscf UKS(Li) and RKS(Li+) in a large even-tempered s basis (tests/pyscf_atoms.py: within 0.1 uHa of the
    # basis-set limit for closed shells); Li 2s1 is spherical, so both codes describe the same states
    from pyscf import dft, gto
    from pyscf_atoms import even_tempered

    basis = {"Li": [[0, [a, 1.0]] for a in even_tempered(0.01, 1e7, 1.6)]}
    energies, homo = [], None
    for charge, spin in ((0, 1), (1, 0)):
        mol = gto.M(atom="Li 0 0 0", basis=basis, charge=charge, spin=spin, verbose=0)
        mf = (dft.UKS if spin else dft.RKS)(mol)
        mf.xc = pyscf_xc
        mf.grids.atom_grid = (500, 50)
        mf.grids.prune = None
        mf.conv_tol = 1e-12
        energies.append(mf.kernel())
        if spin:
            homo = max(mf.mo_energy[0][mf.mo_occ[0] > 0])
    ip = (energies[1] - energies[0]) * units.HARTREE_TO_EV
    assert _row(small_report, "ionisation_potential", "Li", xc).value == pytest.approx(ip, abs=tol)
    assert _row(small_report, "homo_vs_ip", "Li", xc).value == pytest.approx(-homo * units.HARTREE_TO_EV,
                                                                            abs=max(tol, 2e-4))


def test_h2_bond_length_frequency_and_dissociation_energy_match_pyscf(small_report):
    # pyscf RKS/UKS (test-time reference), LDA (Slater + VWN5) / def2-SVP, grid level 5, at ks1d's r_e: its analytic
    # gradient must vanish there, its analytic Hessian (pyscf.hessian) gives omega_e, and
    # D_0 = 2 E(H) - E(r_e) - omega_e / 2 with pyscf's energies (measured: |dE/dR| 2e-7 Ha/bohr, 0.05 cm^-1)
    import numpy as np
    from pyscf import dft, gto

    r_e = _row(small_report, "bond_length", "H2", "lda").value

    def scf(atom, spin):
        mf = (dft.UKS if spin else dft.RKS)(gto.M(atom=atom, basis="def2-svp", spin=spin, verbose=0))
        mf.xc = "lda,vwn"
        mf.grids.level = 5
        mf.conv_tol = 1e-11
        mf.kernel()
        return mf

    mf = scf(f"H 0 0 0; H 0 0 {r_e}", 0)
    assert abs(mf.nuc_grad_method().kernel()[1, 2]) < 2e-5  # Ha/bohr: r_e within 1e-5 angstrom of pyscf's
    k = mf.Hessian().kernel()[1, 1, 2, 2]  # d2E/dz_B^2 = d2E/dR^2 along the bond (atom A fixed)
    mu = 1.00782503 / 2 * units.AMU_TO_ELECTRON_MASS  # 1H mass (AME, as in pyscf.data.elements)
    omega_au = np.sqrt(k / mu)
    assert _row(small_report, "harmonic_frequency", "H2", "lda").value == pytest.approx(
        omega_au * units.HARTREE_TO_INV_CM, abs=2.0)
    d0 = (2 * scf("H 0 0 0", 1).e_tot - mf.e_tot - 0.5 * omega_au) * units.HARTREE_TO_EV
    assert _row(small_report, "dissociation_energy", "H2", "lda").value == pytest.approx(d0, abs=2e-3)


def test_unbound_anions_are_flagged(small_report):
    # H- and Li- are bound in experiment (EA 0.754 and 0.618 eV, CRC via mendeleev) but LDA/PBE put the extra
    # electron in a positive orbital energy (the self-interaction failure for anions; Jensen, J. Chem. Theory
    # Comput. 6, 2726 (2010), from memory): each of the four anions is flagged on its EA cell only
    flags = [f for f in small_report.data.flags if f.kind == "unbound anion"]
    assert {(f.system, f.functional) for f in flags} == {("H", "lda"), ("H", "pbe"), ("Li", "lda"), ("Li", "pbe")}
    assert all(f.quantity == "electron_affinity" for f in flags)


def test_every_number_on_the_page_links_to_its_stored_job(small_report):
    page = open(small_report.paths["html"], encoding="utf-8").read()
    con = sqlite3.connect(small_report.store)
    stored = {k for (k,) in con.execute("SELECT key FROM jobs WHERE status='done'")}
    links = set(re.findall(r'href="#job-([0-9a-f]{12})"', page))
    anchors = set(re.findall(r'id="job-([0-9a-f]{12})"', page))
    assert links and links <= anchors
    assert links <= {k[:12] for k in stored}
    # the IP of Li with PBE as printed in its cell equals the stored value (3 decimals, eV)
    li = _row(small_report, "ionisation_potential", "Li", "pbe")
    assert f"{li.value:.3f} ({li.error:+.3f})" in html.unescape(page)


def test_page_is_self_contained_and_has_units(small_report):
    page = open(small_report.paths["html"], encoding="utf-8").read()
    assert "<script" not in page
    assert not re.search(r'(src|href)="(?!data:image/png;base64,|#)', page)  # no external resource or link
    assert "http" not in re.sub(r"data:image/png;base64,[A-Za-z0-9+/=]+", "", page)
    import os

    n_figures = len(os.listdir(small_report.paths["figures"]))
    assert n_figures >= 5 and page.count('src="data:image/png;base64,') == n_figures
    for unit in ("(eV)", "(Å)", "(cm⁻¹)", "(mHa)"):
        assert unit in html.unescape(page)
    assert "numerical model results for research use" in page


def test_markdown_twin_has_the_same_tables(small_report):
    page = html.unescape(open(small_report.paths["html"], encoding="utf-8").read())
    md = open(small_report.paths["markdown"], encoding="utf-8").read()
    cells = re.findall(r"\d+\.\d{3} \([+-]\d+\.\d{3}\)", page)
    assert cells and all(c in md for c in cells)
    for name in re.findall(r"\]\(([^)]+\.png)\)", md):
        import os

        png = os.path.join(os.path.dirname(small_report.paths["markdown"]), name)
        assert open(png, "rb").read(8) == b"\x89PNG\r\n\x1a\n"


def test_markdown_twin_links_every_number_to_its_stored_job(small_report):
    # the Markdown twin keeps the page's promise: each value cell links to its job's row of the provenance table
    page = open(small_report.paths["html"], encoding="utf-8").read()
    md = open(small_report.paths["markdown"], encoding="utf-8").read()
    html_links = set(re.findall(r'href="#job-([0-9a-f]{12})"', page))
    md_links = set(re.findall(r"\]\(#job-([0-9a-f]{12})\)", md))
    md_anchors = set(re.findall(r'<a id="job-([0-9a-f]{12})"></a>', md))
    assert md_links and md_links == html_links
    assert md_links <= md_anchors
    stored = {k[:12] for (k,) in sqlite3.connect(small_report.store).execute("SELECT key FROM jobs")}
    assert md_anchors <= stored
    li = _row(small_report, "ionisation_potential", "Li", "pbe")
    assert f"[{li.value:.3f} ({li.error:+.3f})](#job-{li.job[:12]})" in md


def test_json_twin_holds_the_same_values(small_report):
    import json

    d = json.load(open(small_report.paths["json"], encoding="utf-8"))
    assert [v["value"] for v in d["values"]] == [r.value for r in small_report.data.rows]
    assert [e["functional"] for e in d["ranking"]] == [e.functional for e in small_report.data.ranking]


def test_a_second_report_reuses_the_store(small_report, tmp_path):
    again = functional_report(["H", "Li"], functionals=["lda", "pbe"], basis="def2-svp",
                              output=str(tmp_path / "again"), store=small_report.store, executor=InlineExecutor())
    assert again.jobs_run == 0 and again.jobs_reused == small_report.jobs_total
    assert [r.value for r in again.data.rows] == [r.value for r in small_report.data.rows]


def test_an_interrupted_report_keeps_what_finished(tmp_path):
    class StopsAfterTwo(InlineExecutor):
        def run(self, jobs, on_result, registry):
            for i, job in enumerate(jobs):
                if i == 2:
                    raise KeyboardInterrupt
                super().run([job], on_result, registry)

    store = str(tmp_path / "s.sqlite")
    with pytest.raises(KeyboardInterrupt):
        functional_report(["H", "He", "Li"], functionals=["lda"], output=str(tmp_path / "r"), store=store,
                          executor=StopsAfterTwo(), diatomics=False)
    done = sqlite3.connect(store).execute("SELECT COUNT(*) FROM jobs WHERE status='done'").fetchone()[0]
    assert done == 2
    out = functional_report(["H", "He", "Li"], functionals=["lda"], output=str(tmp_path / "r"), store=store,
                            executor=InlineExecutor(), diatomics=False)
    assert (out.jobs_reused, out.jobs_run) == (2, 1)


def _r(q, s, f, err):
    return ResultRow(system=s, quantity=q, functional=f, value=err, unit="eV", reference=0.0, error=err,
                     reference_source="test", reference_from_memory=False, job="0" * 64)


def test_ranking_uses_the_common_set_and_leaves_out_thin_coverage():
    # constructed errors (not physics): B misses one comparison, so it is dropped for A too; C has too few
    rows = [_r("ionisation_potential", "X", "A", 0.1), _r("ionisation_potential", "Y", "A", -0.3),
            _r("electron_affinity", "X", "A", 0.9), _r("ionisation_potential", "Z", "A", 0.2),
            _r("ionisation_potential", "X", "B", 0.2), _r("ionisation_potential", "Y", "B", 0.2),
            _r("ionisation_potential", "Z", "B", 0.2),
            _r("ionisation_potential", "X", "C", 0.0)]
    ranking, common, dropped = rank_functionals(rows, ["A", "B", "C"])
    by = {e.functional: e for e in ranking}
    assert set(common) == {("ionisation_potential", s) for s in "XYZ"}
    assert dropped == (("electron_affinity", "X"),)
    assert by["A"].score == pytest.approx(0.2) and by["B"].score == pytest.approx(0.2)
    assert by["C"].rank is None and "not ranked" in by["C"].note
    assert by["A"].mae["electron_affinity"] == (pytest.approx(0.9), 1)


def test_a_stalled_density_residual_is_retried_and_flagged():
    # r2SCAN Li stalls at a density residual of ~5e-6 with its energy converged (DEVELOPERS.md, known finding);
    # the survey's one retry accepts a 1e-5 density tolerance and records the step.  Reference: pyscf UKS(Li)
    # and RKS(Li+) with r2SCAN in the large even-tempered s basis (run now).
    from pyscf import dft, gto
    from pyscf_atoms import even_tempered

    from ks1d.sweep.properties.registry import run_property
    from ks1d.sweep.properties.systems import System

    out = run_property("atom_survey", System(name="Li", kind="atom", symbol="Li"), "r2scan",
                       {"precision": "normal", "atom_options": {"estimate_error": False}})
    assert out["details"]["retried_steps"] == ["Li"]
    basis = {"Li": [[0, [a, 1.0]] for a in even_tempered(0.01, 1e7, 1.6)]}
    e = []
    for charge, spin in ((0, 1), (1, 0)):
        mf = (dft.UKS if spin else dft.RKS)(gto.M(atom="Li 0 0 0", basis=basis, charge=charge, spin=spin,
                                                   verbose=0))
        mf.xc = "r2scan"
        mf.grids.atom_grid = (500, 50)
        mf.grids.prune = None
        mf.conv_tol = 1e-11
        e.append(mf.kernel())
    # 5e-3 eV: neutral Li with r2SCAN lies 9e-5 Ha below pyscf's converged value (Li+ agrees to 1e-10 Ha), the
    # open-shell GGA/meta-GGA finding of DEVELOPERS.md; a wrong state or configuration would be off by >= 0.1 eV
    assert out["values"]["ionisation_potential"] == pytest.approx((e[1] - e[0]) * units.HARTREE_TO_EV, abs=5e-3)


def test_s_to_p_promotion_of_carbon_uses_the_quintet_and_matches_pyscf():
    # C 2s1 2p3 high spin is the 5S term: one spin-up electron in each of 2s and the three 2p orbitals, a
    # spherical single determinant, so pyscf's UKS with 2S = 4 (aug-cc-pVQZ, run now) describes the same state
    # and lies above the radial basis-set limit by its basis error (< 2 mHa for C at QZ: measured 0.4-1 mHa).
    from pyscf import dft, gto

    import ks1d
    from ks1d.sweep.properties.registry import run_property
    from ks1d.sweep.properties.systems import System

    out = run_property("atom_survey", System(name="C", kind="atom", symbol="C"), "pbe",
                       {"precision": "normal", "atom_options": {"estimate_error": False}})
    assert out["details"]["sp_promotion_to"] == "[He] 2s1 2p3"
    upper = next(c for c in out["calculations"] if c["label"].startswith("C s→p to"))
    mf = dft.UKS(gto.M(atom="C 0 0 0", basis="aug-cc-pvqz", spin=4, verbose=0))
    mf.xc = "pbe,pbe"
    mf.grids.level = 5
    e_quintet = mf.kernel()
    assert e_quintet - 2e-3 < upper["total_energy"] < e_quintet + 1e-5
    neutral = ks1d.solve_atom("C", xc="pbe", estimate_error=False).total_energy
    assert out["values"]["sp_promotion"] == pytest.approx((upper["total_energy"] - neutral) * units.HARTREE_TO_EV,
                                                          abs=1e-6)


def _pyscf_uks_ip_of_oxygen(xc: str, basis: str) -> float:
    """E(O+, 4S) - E(O, 3P) in eV from pyscf UKS with integer occupations (symmetry-broken), grid level 5."""
    from pyscf import dft, gto

    e = []
    for charge, spin in ((0, 2), (1, 3)):
        mf = dft.UKS(gto.M(atom="O 0 0 0", basis=basis, charge=charge, spin=spin, verbose=0))
        mf.xc = xc
        mf.grids.level = 5
        e.append(mf.kernel())
    return (e[1] - e[0]) * units.HARTREE_TO_EV


def test_symmetry_broken_ip_of_oxygen_matches_pyscf_uks():
    # With symmetry_broken_basis the IP refers to integer-occupation atoms: the spherical radial limit plus
    # E(integer) - E(spherical) in aug-cc-pVTZ.  pyscf UKS (integer occupations, symmetry-broken, aug-cc-pVQZ,
    # run now) gives that IP directly; the two differ by the basis dependence of the symmetry-breaking energy
    # (O, PBE: 1.2 mHa between aug-cc-pVDZ and aug-cc-pVTZ, so <= 0.03 eV at TZ) and pyscf's QZ basis error.
    from ks1d.sweep.properties.registry import run_property
    from ks1d.sweep.properties.systems import System

    out = run_property("atom_survey", System(name="O", kind="atom", symbol="O"), "pbe",
                       {"precision": "normal", "atom_options": {"estimate_error": False},
                        "symmetry_broken_basis": "aug-cc-pvtz"})
    assert out["values"]["ionisation_potential"] == pytest.approx(_pyscf_uks_ip_of_oxygen("pbe,pbe", "aug-cc-pvqz"),
                                                                   abs=0.03)
    # the spherical IP is ~0.4 eV lower: the correction is not a no-op (O 3P breaks symmetry by ~14 mHa)
    assert out["details"]["symmetry_breaking_energy"]["O"] < -0.01


def test_hse06_atoms_from_the_gaussian_solver_match_pyscf():
    # HSE06 has no radial atoms (range separation): its IP comes from Gaussian UKS atoms with integer
    # occupations in aug-cc-pVTZ.  pyscf's UKS with the same functional, basis and occupations (run now) must
    # give the same IP up to the two codes' grid differences (~1e-5 Ha, well below 0.01 eV).
    from ks1d.sweep.properties.registry import run_property
    from ks1d.sweep.properties.systems import System

    out = run_property("atom_survey_basis", System(name="O", kind="atom", symbol="O"), "hse06",
                       {"basis": "aug-cc-pvtz"})
    assert out["values"]["ionisation_potential"] == pytest.approx(_pyscf_uks_ip_of_oxygen("hse06", "aug-cc-pvtz"),
                                                                   abs=0.01)


def test_gaussian_atom_functionals_are_listed_beside_the_ranking(tmp_path):
    out = functional_report(["H"], functionals=["lda", "hse06"], output=str(tmp_path / "h"),
                            executor=InlineExecutor(), diatomics=False)
    by = {e.functional: e for e in out.data.ranking}
    assert by["lda"].rank == 1
    assert by["hse06"].rank is None and "Gaussian" in by["hse06"].note
    assert "ionisation_potential" in by["hse06"].mae  # its own MAE is still shown


_SCORE_SCRIPT = """
import sys
from ks1d.report.analysis import rank_functionals
from ks1d.sweep.output.collect import ResultRow
errs = [((i * 7919) % 1000) / 997.0 - 0.4 for i in range(40)]   # constructed errors (not physics)
rows = [ResultRow(system=f"X{i}", quantity="ionisation_potential", functional="A", value=e, unit="eV", reference=0.0,
                  error=e, reference_source="test", reference_from_memory=False, job="0" * 64)
        for i, e in enumerate(errs)]
print(repr(rank_functionals(rows, ["A"])[0][0].score))
"""


def test_the_ranking_score_does_not_depend_on_the_string_hash_seed():
    # the common set was a Python set, so the score's float sum ran in a hash-seed-dependent order and its
    # last digits changed from run to run; it is summed in sorted order now
    import os
    import subprocess
    import sys

    scores = {subprocess.run([sys.executable, "-c", _SCORE_SCRIPT], capture_output=True, text=True, check=True,
                             env=dict(os.environ, PYTHONHASHSEED=str(seed))).stdout.strip() for seed in range(6)}
    assert len(scores) == 1, scores
