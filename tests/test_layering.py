"""The data flow runs one way: computation never loads plotting (or matplotlib)."""

from __future__ import annotations

import subprocess
import sys

import pytest

COMPUTATION = [
    "splitting.spectra.assign",
    "splitting.spectra.counting",
    "splitting.spectra.explanation",
    "splitting.crystal.predict",
    "splitting.phases.compare",
    "splitting.phases.lower",
]


@pytest.mark.parametrize("module", COMPUTATION)
def test_computation_does_not_import_plotting(module):
    code = (
        f"import sys, importlib; importlib.import_module({module!r}); "
        "bad = sorted(m for m in sys.modules if m.startswith(('matplotlib', 'splitting.plot', 'splitting.report'))); "
        "print(','.join(bad))"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout.strip()
    assert out == "", f"{module} loads {out}"
