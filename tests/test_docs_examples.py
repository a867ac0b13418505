"""The Python examples of the docs run as written.

Every ```python block of the pages below is executed, in order and in one namespace per
page, in a temporary folder holding the files the examples name: the bundled structures,
an invented peak list and an invented raw spectrum (labelled invented; no measured data).
docs/notebook.md is doctested separately (pyproject addopts) and docs/screening.md by
tests/test_batch.py.
"""

from __future__ import annotations

import re
import shutil
from pathlib import Path

import numpy as np
import pytest

ROOT = Path(__file__).resolve().parents[1]
PAGES = ["explain.md", "figures.md", "mode-tables.md"]
#: lines that need a tight-binding run (the estimate); tests/test_estimate_hooks.py covers them
NEEDS_ESTIMATE = re.compile(r"\best\b")


def _blocks(page: str) -> list[str]:
    text = (ROOT / "docs" / page).read_text(encoding="utf-8")
    return re.findall(r"```python\n(.*?)```", text, re.S)


@pytest.fixture
def workdir(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> Path:
    shutil.copytree(ROOT / "structures", tmp_path / "structures")
    shutil.copy(ROOT / "structures" / "calcite.cif", tmp_path / "calcite.cif")
    peaks = ROOT / "tests" / "data" / "spectra" / "invented_peaks_raman.csv"
    shutil.copy(peaks, tmp_path / "peaks.csv")
    shutil.copy(peaks, tmp_path / "my_raman_peaks.csv")
    shutil.copy(ROOT / "splitting" / "data" / "units" / "ammonium.toml", tmp_path / "my_unit.toml")
    # invented raw spectrum: two Lorentzians (1086 and 712 cm-1, FWHM 4 cm-1) on a flat baseline
    x = np.arange(100.0, 1800.0, 1.0)
    y = 0.02 + sum(h / (1 + ((x - c) / 2.0) ** 2) for c, h in ((1086.0, 1.0), (712.0, 0.3)))
    lines = ["# INVENTED DATA for the splitting test suite: not a measured spectrum."]
    lines += [f"{a:.1f} {b:.6f}" for a, b in zip(x, y, strict=True)]
    (tmp_path / "raw.txt").write_text("\n".join(lines) + "\n")
    monkeypatch.chdir(tmp_path)
    return tmp_path


@pytest.mark.parametrize("page", PAGES)
def test_page_examples_run(page: str, workdir: Path) -> None:
    import matplotlib

    matplotlib.use("Agg")
    blocks = _blocks(page)
    assert blocks, f"docs/{page} has no python examples"
    namespace: dict = {}
    for block in blocks:
        code = "\n".join(line for line in block.splitlines() if not NEEDS_ESTIMATE.search(line))
        exec(compile(code, f"docs/{page}", "exec"), namespace)  # our own docs
