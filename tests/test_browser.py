"""The HTML report in a real browser: headless Chromium renders it, with no console errors.

Chromium comes from Debian's package.  When it is missing, the fixture installs it once with
``apt-get`` if running as root with ``CI`` or ``SPLITTING_BROWSER_TESTS=1`` set; otherwise
the tests are skipped with the reason.
"""

from __future__ import annotations

import os
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
            ["apt-get", "install", "-y", "--no-install-recommends", "chromium"],
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
