"""Simulated IR, Raman and neutron spectra of an estimate, their figure and the command line.

Solid CO2 (Pa-3) from the bundled structure; free-unit Hessians cached in a temporary folder.
"""

from __future__ import annotations

import json

import numpy as np
import pytest

from splitting.dynamics import EstimateOptions, estimate
from splitting.dynamics.neutron import INCOHERENT_BARN
from splitting.dynamics.spectra import lorentzian, simulate, simulate_all
from splitting.errors import InputError


@pytest.fixture(scope="module")
def co2(structures_dir, tmp_path_factory):
    cache = tmp_path_factory.mktemp("hessians")
    return estimate(structures_dir / "co2_Pa-3.cif", model=EstimateOptions(cache=str(cache)))


def test_ir_and_raman_sticks_follow_the_engine_activity(co2):
    ir = simulate(co2, "IR", width_cm1=2.0)
    raman = simulate(co2, "Raman", width_cm1=2.0)
    optical = [ln for ln in co2.lines if ln.origin != "acoustic"]
    assert len(ir.sticks) == sum("IR" in ln.activity for ln in optical)
    assert len(raman.sticks) == sum("Raman" in ln.activity for ln in optical)
    # Th is centrosymmetric: mutual exclusion, no line in both spectra (common practice)
    assert not {s.wavenumber_cm1 for s in ir.sticks} & {s.wavenumber_cm1 for s in raman.sticks}
    assert {s.species for s in ir.sticks} == {"Tu"}
    assert {s.species for s in raman.sticks} <= {"Ag", "Eg", "Tg"}
    # height is the degeneracy: Ag (1) against Tg (3) in Raman
    ag = next(s for s in raman.sticks if s.species == "Ag")
    assert ag.height == pytest.approx(1 / 3)
    assert max(s.height for s in raman.sticks) == 1.0


def test_ins_shows_every_line(co2):
    ins = simulate(co2, "INS", width_cm1=2.0)
    assert len(ins.sticks) == sum(ln.origin != "acoustic" for ln in co2.lines)
    assert "Sears" in ins.height_rule


def test_broadening_is_lorentzian_of_the_stated_width(co2):
    ir = simulate(co2, "IR", width_cm1=4.0, step_cm1=0.05)
    top = max(ir.sticks, key=lambda s: s.wavenumber_cm1)  # nu3 Tu, far from the others
    x = ir.wavenumber_cm1
    near = np.abs(x - top.wavenumber_cm1) < 20
    peak = ir.intensity[near].max()
    above = x[near][ir.intensity[near] >= peak / 2]
    assert above.max() - above.min() == pytest.approx(4.0, abs=0.15)
    assert ir.intensity.max() == pytest.approx(1.0)
    assert lorentzian(np.array([0.0, 1.0]), 0.0, 2.0) == pytest.approx([1.0, 0.5])


def test_all_techniques_share_one_grid(co2):
    spectra = simulate_all(co2, width_cm1=3.0)
    assert [s.technique for s in spectra] == ["IR", "Raman", "INS"]
    assert all(np.array_equal(s.wavenumber_cm1, spectra[0].wavenumber_cm1) for s in spectra)
    d = spectra[0].to_dict()
    assert d["shape"] == "Lorentzian" and d["width_cm1"] == 3.0 and d["model"].startswith("model:")


@pytest.mark.parametrize("kwargs", [{"width_cm1": 0.0}, {"width_cm1": -1.0}, {"width_cm1": float("nan")}])
def test_bad_width(co2, kwargs):
    with pytest.raises(InputError, match="width"):
        simulate(co2, "IR", **kwargs)


def test_unknown_technique(co2):
    with pytest.raises(InputError, match="techniques"):
        simulate(co2, "UV", width_cm1=2.0)


def test_hydrogen_dominates_the_incoherent_cross_sections():
    """Sears (1992): H 80.26 b incoherent, C and O almost nothing (from memory)."""
    assert INCOHERENT_BARN["H"] == pytest.approx(80.26)
    assert INCOHERENT_BARN["H"] > 10 * max(v for k, v in INCOHERENT_BARN.items() if k != "H")
    assert INCOHERENT_BARN["C"] < 0.01 and INCOHERENT_BARN["O"] < 0.01


def test_figure_artists(co2):
    from splitting.plot.simulated import spectra_figure

    spectra = simulate_all(co2, width_cm1=3.0)
    art = spectra_figure(spectra, title="CO2")
    assert art.techniques == ("IR", "Raman", "INS")
    assert len(art.axes) == 3 and len(art.curves) == 3
    for sp in spectra:
        drawn = sorted(w for t, w, _, _ in art.sticks if t == sp.technique)
        assert drawn == sorted(s.wavenumber_cm1 for s in sp.sticks)
    for ax, sp in zip(art.axes, spectra, strict=True):
        assert np.array_equal(ax.lines[0].get_xdata(), sp.wavenumber_cm1)
    texts = " ".join(t.get_text() for t in art.notes)
    assert "FWHM 3 cm" in texts and "not measured" in texts and "williams" in texts


@pytest.mark.parametrize("width", [3.0, 0.5])
def test_notes_stay_above_the_lines(co2, width):
    """The (wrapped) notes of each panel end above its tallest line, in every panel."""
    from splitting.plot.simulated import spectra_figure

    art = spectra_figure(simulate_all(co2, width_cm1=width), title="CO2")
    renderer = art.figure.canvas.get_renderer()
    for ax in art.axes:
        notes = [t for t in art.notes if t.axes is ax]
        bottom = min(t.get_window_extent(renderer).y0 for t in notes)
        tallest = max(float(np.max(line.get_ydata())) for line in ax.get_lines())
        top_of_lines = ax.transData.transform((0.0, tallest))[1]
        assert top_of_lines < bottom


def test_cli_spectra_figure_and_data(run_cli, structures_dir, tmp_path):
    cache = tmp_path / "cache"
    cache.mkdir()
    fig = tmp_path / "co2.svg"
    code, _out, err = run_cli(
        ["estimate", structures_dir / "co2_Pa-3.cif", "--cache", cache, "--spectra", fig, "--width", "2.5"]
    )
    assert code == 0 and fig.read_bytes().startswith(b"<?xml") and "simulated spectra written" in err
    data_file = tmp_path / "co2.json"
    code, _out, _err = run_cli(["estimate", structures_dir / "co2_Pa-3.cif", "--cache", cache, "--spectra", data_file])
    assert code == 0
    data = json.loads(data_file.read_text())
    assert [s["technique"] for s in data["spectra"]] == ["IR", "Raman", "INS"]
    assert data["spectra"][0]["width_cm1"] == 3.0  # the default width


@pytest.mark.parametrize(
    "extra, words",
    [
        (["--spectra", "x.txt"], "figure"),
        (["--width", "2"], "--spectra"),
        (["--spectra", "x.svg", "--width", "0"], "above 0"),
        (["--spectra", "x.svg", "--width", "-3"], "above 0"),
    ],
)
def test_cli_bad_spectra_options(run_cli, structures_dir, tmp_path, extra, words):
    extra = [str(tmp_path / e) if e.startswith("x.") else e for e in extra]
    argv = ["estimate", structures_dir / "co2_Pa-3.cif", *extra]
    code, out, err = run_cli(argv)
    assert code != 0 and out == ""
    assert err.startswith("error:") and words in err and len(err.strip().splitlines()) == 1
    assert not list(tmp_path.glob("x.*"))
