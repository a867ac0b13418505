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


def test_defaults_match_the_modules_that_use_them() -> None:
    """splitting.defaults is the one place a default lives; the potential names match the sets."""
    from splitting import defaults
    from splitting.dynamics.potential import PARAMETER_SETS

    assert tuple(PARAMETER_SETS) == defaults.POTENTIAL_NAMES
