"""The top-level API: lazy entry points, ``__version__``, ``predict`` on a path or an Atoms, summaries."""

from __future__ import annotations

import subprocess
import sys
from html.parser import HTMLParser
from importlib.metadata import version

import pytest
from ase import Atoms
from ase.io import read

import splitting


def test_import_is_lazy():
    code = (
        "import sys, splitting; "
        "heavy = [m for m in ('numpy', 'ase', 'spglib', 'matplotlib', 'splitting.crystal') if m in sys.modules]; "
        "print(','.join(heavy))"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout.strip()
    assert out == ""


def test_version_and_names():
    assert splitting.__version__ == version("splitting")
    for name in splitting.__all__:
        assert getattr(splitting, name) is not None, name
    assert "predict" in dir(splitting)
    with pytest.raises(AttributeError, match="no attribute 'nonsense'"):
        splitting.nonsense  # noqa: B018


def test_predict_path_and_atoms_agree(structures_dir):
    path = structures_dir / "calcite.cif"
    a = splitting.predict(path)
    b = splitting.predict(read(path))
    assert b.source == "C6Ca6O18"
    assert a.to_dict()["species"] == b.to_dict()["species"]
    assert str(path) == str(splitting.bundled_structure("calcite.cif"))


def test_predict_bad_inputs():
    with pytest.raises(splitting.InputError, match="no periodic cell"):
        splitting.predict(Atoms("H2", positions=[[0, 0, 0], [0, 0, 0.74]]))
    with pytest.raises(splitting.InputError, match="not int"):
        splitting.predict(42)
    with pytest.raises(splitting.InputError, match="format applies to files only"):
        splitting.predict(read(splitting.bundled_structure("calcite.cif")), format="cif")
    with pytest.raises(splitting.InputError, match=r"no bundled structure 'x\.cif'.*calcite\.cif"):
        splitting.bundled_structure("x.cif")


class _Balance(HTMLParser):
    def __init__(self) -> None:
        super().__init__()
        self.stack: list[str] = []
        self.errors: list[str] = []

    def handle_starttag(self, tag, attrs):
        self.stack.append(tag)

    def handle_endtag(self, tag):
        if not self.stack or self.stack.pop() != tag:
            self.errors.append(tag)


def _results(structures_dir):
    from splitting.spectra.measured import Peak, PeakList

    p = splitting.predict(structures_dir / "calcite.cif")
    seq = splitting.compare_phases(
        [structures_dir / "c60_fcc_Fm-3m_disordered.cif", structures_dir / "c60_ordered_Pa-3.cif"], ["300 K", "90 K"]
    )
    low = splitting.lower(structures_dir / "calcite.cif", max_index=2)
    ex = splitting.explain(p, PeakList((Peak(1086.0, 1.0), Peak(1600.0, 0.1)), technique="raman"))
    from splitting.readers import read_atoms

    mol = read_atoms(structures_dir / "molecules" / "c60.xyz")
    free = splitting.analyse_unit(mol.numbers, mol.positions, symbols=mol.get_chemical_symbols())
    return {"CrystalPrediction": p, "PhaseSequence": seq, "Lowering": low, "Explanation": ex, "FreeUnitAnalysis": free}


def test_summaries(structures_dir):
    for name, result in _results(structures_dir).items():
        text = repr(result)
        first = text.splitlines()[0]
        assert first.startswith(f"{name}: "), text
        assert len(text.splitlines()) <= 8 and max(len(x) for x in text.splitlines()) <= 120, text
        assert "/" not in first.split(": ", 1)[1], "a summary names files, not folders"
        html = result._repr_html_()
        checker = _Balance()
        checker.feed(html)
        assert not checker.errors and not checker.stack, html
        assert "<table>" in html


def test_summary_wording(structures_dir):
    r = _results(structures_dir)
    assert "2 lines (Raman)" in repr(r["Explanation"]) and "1 unexplained" in repr(r["Explanation"])
    assert "Ih" in repr(r["FreeUnitAnalysis"])
    assert "300 K: Fm-3m" in repr(r["PhaseSequence"]) and "disordered" in repr(r["PhaseSequence"])
