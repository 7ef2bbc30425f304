"""The report page in a real browser: headless Chromium renders its tables and embedded plots.

Chromium (Debian's ``chromium`` package) is installed by .ci/run, which sets KS1D_REQUIRE_BROWSER=1 so that a
missing browser fails the test there instead of skipping it.  Chromium is started as the project's
machine notes prescribe for this sandbox (no network, a fresh profile):
--headless --no-sandbox --disable-gpu --disable-quic --no-first-run --disable-background-networking
--disable-component-update --disable-sync --user-data-dir=<new empty directory>.
"""
from __future__ import annotations

import html
import os
import re
import shutil
import subprocess

import numpy as np
import pytest

from ks1d.report.figures import PALETTE

FLAGS = ("--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
         "--disable-background-networking", "--disable-component-update", "--disable-sync", "--hide-scrollbars",
         "--force-device-scale-factor=1")
WIDTH, HEIGHT = 1280, 9000


def _chromium() -> str:
    for name in ("chromium", "chromium-browser", "google-chrome"):
        path = shutil.which(name)
        if path:
            return path
    if os.environ.get("KS1D_REQUIRE_BROWSER") == "1":
        pytest.fail("KS1D_REQUIRE_BROWSER=1 but no chromium executable is on PATH (.ci/run installs Debian's)")
    pytest.skip("no chromium on this machine (CI installs it)")


def _run(browser: str, profile, *args: str) -> subprocess.CompletedProcess:
    return subprocess.run([browser, *FLAGS, f"--user-data-dir={profile}", *args], capture_output=True,
                          timeout=180, text=False)


@pytest.fixture(scope="module")
def browser_views(small_report, tmp_path_factory):
    browser = _chromium()
    url = "file://" + os.path.abspath(small_report.paths["html"])
    d = tmp_path_factory.mktemp("browser")
    dom = _run(browser, d / "profile-dom", "--dump-dom", url)
    assert dom.returncode == 0, dom.stderr.decode(errors="replace")[-2000:]
    shot = d / "page.png"
    r = _run(browser, d / "profile-shot", f"--window-size={WIDTH},{HEIGHT}", f"--screenshot={shot}", url)
    assert r.returncode == 0 and shot.exists(), r.stderr.decode(errors="replace")[-2000:]
    return dom.stdout.decode("utf-8"), str(shot)


def test_browser_parses_the_tables_and_text(browser_views, small_report):
    dom, _ = browser_views
    text = html.unescape(re.sub(r"<[^>]+>", " ", dom))
    for heading in ("Ranking of the functionals", "Ionisation potentials (eV)", "Electron affinities (eV)",
                    "Basis-set error of the planned basis (mHa)", "Diatomic bond lengths r_e (Å)", "Provenance"):
        assert heading in text
    # as many tables in the rendered DOM as the document has, with the Li PBE IP cell as computed
    src = open(small_report.paths["html"], encoding="utf-8").read()
    assert dom.count("<table") == src.count("<table") >= 10
    li = small_report.data.value("ionisation_potential", "Li", "pbe")
    assert f"{li.value:.3f} ({li.error:+.3f})" in text


def test_screenshot_shows_the_embedded_plots(browser_views):
    _, shot = browser_views
    import matplotlib.image as mpimg

    img = mpimg.imread(shot)  # floats in [0, 1], shape (height, width, channels)
    assert img.shape[1] == WIDTH and img.shape[0] == HEIGHT
    rgb = np.round(img[..., :3] * 255).astype(int)
    # the bar colour of the first functional is used by the plots only (not by the style sheet): it shows up in
    # the screenshot only if the browser decoded and drew the base64 PNGs
    target = np.array([int(PALETTE[0][i:i + 2], 16) for i in (1, 3, 5)])
    bar_pixels = int(np.sum(np.all(np.abs(rgb - target) <= 4, axis=-1)))
    assert bar_pixels > 5000
    # and the page is not blank: table borders, text and figures give many distinct colours
    assert len(np.unique(rgb.reshape(-1, 3), axis=0)) > 200
