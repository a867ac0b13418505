"""The HTML report in a real browser: headless Chromium renders it, with no console errors.

Every figure is drawn with a size, every link inside the page leads to its target, and the
bundled report (the demo's) prints to PDF on A4 and on US letter with the expected number of
pages and no near-empty page; poppler's ``pdfinfo`` and ``pdftoppm`` read the PDF back.

Chromium and poppler-utils come from Debian's packages (``.ci/run`` installs them in CI).
When Chromium is missing, the fixture installs it once with ``apt-get`` if running as root
with ``CI`` or ``SPLITTING_BROWSER_TESTS=1`` set; otherwise the tests are skipped with the reason.
"""

from __future__ import annotations

import json
import os
import re
import shutil
import subprocess
from pathlib import Path

import pytest

from splitting.crystal.predict import predict
from splitting.report.html import write_report

pytestmark = pytest.mark.browser

_FLAGS = [
    "--headless",
    "--no-sandbox",
    "--disable-gpu",
    "--disable-quic",
    "--no-first-run",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
    "--disable-extensions",
    "--hide-scrollbars",
]


def _install_chromium() -> str | None:
    wanted = os.environ.get("CI") or os.environ.get("SPLITTING_BROWSER_TESTS") == "1"
    if not wanted or not hasattr(os, "geteuid") or os.geteuid() != 0 or not shutil.which("apt-get"):
        return None
    env = dict(os.environ, DEBIAN_FRONTEND="noninteractive")
    try:
        subprocess.run(["apt-get", "update"], check=True, capture_output=True, timeout=600, env=env)
        subprocess.run(
            ["apt-get", "install", "-y", "--no-install-recommends", "chromium", "poppler-utils"],
            check=True,
            capture_output=True,
            timeout=900,
            env=env,
        )
    except (subprocess.SubprocessError, OSError):
        return None
    return shutil.which("chromium")


@pytest.fixture(scope="session")
def chromium() -> str:
    exe = shutil.which("chromium") or _install_chromium()
    if exe is None:
        pytest.skip(
            "headless Chromium not available: install Debian's 'chromium' package "
            "(or run as root with CI=1 or SPLITTING_BROWSER_TESTS=1 to install it automatically)"
        )
    return exe


@pytest.fixture(scope="module")
def report(tmp_path_factory, structures_dir) -> Path:
    pred = predict(structures_dir / "calcite.cif")
    folder = tmp_path_factory.mktemp("browser")
    return write_report(folder / "calcite.html", [("calcite, R-3c", pred)], title="Calcite")


def _run(chromium: str, profile: Path, *args: str) -> subprocess.CompletedProcess[str]:
    cmd = [chromium, *_FLAGS, f"--user-data-dir={profile}", "--enable-logging=stderr", "--v=0", *args]
    return subprocess.run(cmd, capture_output=True, text=True, timeout=60)


def _console_errors(stderr: str) -> list[str]:
    # the page has no scripts, so any console message (Chromium logs them as "...:CONSOLE:...",
    # uncaught exceptions as "Uncaught ...") or a failed load is a fault
    return [line for line in stderr.splitlines() if ":CONSOLE" in line or "Uncaught" in line or "net::ERR_" in line]


def test_report_renders_in_chromium(chromium, report, tmp_path):
    shot = tmp_path / "shot.png"
    res = _run(chromium, tmp_path / "profile-shot", f"--screenshot={shot}", "--window-size=1200,2000", report.as_uri())
    assert shot.exists(), res.stderr[-2000:]
    assert not _console_errors(res.stderr), _console_errors(res.stderr)

    import matplotlib.image as mpimg

    img = mpimg.imread(shot)
    assert img.shape[0] >= 1900 and img.shape[1] >= 1100
    rgb = img[..., :3]
    ink = (rgb.mean(axis=2) < 0.85).mean()
    # text, tables and a diagram: a few percent of the pixels are dark, far from a blank page
    assert ink > 0.01, ink
    # the activity marks are drawn in their colours (red IR dot, blue Raman square)
    red = ((rgb[..., 0] > 0.55) & (rgb[..., 1] < 0.3) & (rgb[..., 2] < 0.3)).sum()
    assert red > 20


def test_report_dom(chromium, report, tmp_path):
    res = _run(chromium, tmp_path / "profile-dom", "--dump-dom", report.as_uri())
    dom = res.stdout
    assert "<svg" in dom and dom.count("<svg") == 1
    assert "Factor-group species" in dom and "Correlation:" in dom
    assert not _console_errors(res.stderr), _console_errors(res.stderr)


# ----------------------------------------------------------------------------- in the page

# Run inside a copy of the page (the report itself has no scripts): the size of every figure,
# whether every in-page link has a target and scrolls to it, and any error raised on the page.
_PROBE = """
<script>
window.__errors = [];
window.addEventListener("error", (e) => window.__errors.push(String(e.message)));
window.addEventListener("load", () => {
  const figs = [...document.querySelectorAll("figure svg")].map((svg) => {
    const r = svg.getBoundingClientRect();
    return {w: r.width, h: r.height, drawn: svg.querySelectorAll("path, use, text").length};
  });
  const links = [...document.querySelectorAll('a[href^="#"]')].map((a) => {
    const id = a.getAttribute("href").slice(1);
    const target = document.getElementById(id);
    if (!target) return {id, found: false};
    a.click();
    const top = target.getBoundingClientRect().top;
    return {id, found: true, hash: location.hash, top};
  });
  const out = document.createElement("pre");
  out.id = "probe-result";
  out.textContent = JSON.stringify({figs, links, errors: window.__errors});
  document.body.appendChild(out);
});
</script>
"""


def _probe(chromium: str, page: Path, tmp_path: Path) -> dict:
    probed = tmp_path / f"probe-{page.name}"
    probed.write_text(page.read_text(encoding="utf-8").replace("</body>", _PROBE + "</body>"), encoding="utf-8")
    res = _run(chromium, tmp_path / "profile-probe", "--window-size=1200,900", "--dump-dom", probed.as_uri())
    assert not _console_errors(res.stderr), _console_errors(res.stderr)
    m = re.search(r'<pre id="probe-result">(.*?)</pre>', res.stdout, re.S)
    assert m, res.stderr[-2000:]
    from html import unescape

    return json.loads(unescape(m[1]))


@pytest.fixture(scope="module")
def bundled(tmp_path_factory) -> Path:
    """The report of the bundled scenario (two phases, assignments, candidates)."""
    from splitting.demo import run_demo

    return run_demo(tmp_path_factory.mktemp("demo")).folder / "report.html"


@pytest.mark.parametrize("which", ["report", "bundled"])
def test_figures_drawn_and_links_work(chromium, which, request, tmp_path):
    page = request.getfixturevalue(which)
    result = _probe(chromium, page, tmp_path)
    assert not result["errors"], result["errors"]
    n_svg = page.read_text(encoding="utf-8").count("<svg")
    assert len(result["figs"]) == n_svg >= 1
    for fig in result["figs"]:
        assert fig["w"] > 200 and fig["h"] > 100 and fig["drawn"] > 10, fig
    assert result["links"], "no contents links"
    for link in result["links"]:
        assert link["found"], link
        assert link["hash"] == "#" + link["id"]
        # the target is scrolled to the top of the window (or the page ends before it can be)
        assert link["top"] < 900, link


# ----------------------------------------------------------------------------- printing

#: Pages of the bundled report on each paper size (Chromium from Debian 12, DejaVu fonts);
#: a change of a page or two is a change of layout to look at, not necessarily a fault.
_PAGES = {"A4": 17, "letter": 17}


def _pdf(chromium: str, page: Path, size: str, folder: Path) -> Path:
    # the paper size comes from the print dialog; a page-size rule stands in for it here
    sized = folder / f"{page.stem}-{size}.html"
    sized.write_text(
        page.read_text(encoding="utf-8").replace("</head>", f"<style>@page {{ size: {size}; }}</style></head>"),
        encoding="utf-8",
    )
    pdf = folder / f"{page.stem}-{size}.pdf"
    res = _run(
        chromium,
        folder / f"profile-{size}",
        "--no-pdf-header-footer",
        "--print-to-pdf-no-header",
        f"--print-to-pdf={pdf}",
        sized.as_uri(),
    )
    assert pdf.exists(), res.stderr[-2000:]
    return pdf


def _poppler(tool: str) -> str:
    exe = shutil.which(tool)
    if exe is None:
        pytest.skip(f"{tool} not available: install Debian's 'poppler-utils' package")
    return exe


@pytest.mark.parametrize("size", sorted(_PAGES))
def test_bundled_report_prints(chromium, bundled, size, tmp_path):
    pdf = _pdf(chromium, bundled, size, tmp_path)
    info = subprocess.run([_poppler("pdfinfo"), str(pdf)], capture_output=True, text=True, check=True).stdout
    pages = int(re.search(r"^Pages:\s+(\d+)", info, re.M)[1])
    width, height = (float(x) for x in re.search(r"^Page size:\s+([\d.]+) x ([\d.]+)", info, re.M).groups())
    expected = {"A4": (595, 842), "letter": (612, 792)}[size]
    assert abs(width - expected[0]) < 2 and abs(height - expected[1]) < 2, info
    assert abs(pages - _PAGES[size]) <= 2, f"{pages} pages on {size}, expected about {_PAGES[size]}"
    # no near-empty page: on every page the printed matter spans at least 30% of the height
    subprocess.run([_poppler("pdftoppm"), "-r", "20", "-png", str(pdf), str(tmp_path / "page")], check=True)
    import matplotlib.image as mpimg
    import numpy as np

    shots = sorted(tmp_path.glob("page-*.png"))
    assert len(shots) == pages
    for k, shot in enumerate(shots, 1):
        img = mpimg.imread(shot)[..., :3]
        rows = np.where((img.mean(axis=2) < 0.9).any(axis=1))[0]
        span = (rows.max() - rows.min()) / img.shape[0] if len(rows) else 0.0
        assert span >= 0.3, f"page {k} of {pages} ({size}) is nearly empty ({span:.0%} of the height)"
