"""The line-pattern figure: bars at the free value without an estimate, at the estimate with one.

Read back from the artists: where every bar is drawn, how many components each label
counts, the note on the figure, and that no labels overlap.
"""

from __future__ import annotations

import numpy as np
import pytest

from splitting.errors import InputError
from splitting.plot import line_pattern
from splitting.plot.correlation import text_overlaps
from splitting.spectra.catalogue import find_table


def _y_to_cm1(ax):
    """The linear map from the axes' y data to cm-1, read from the tick labels."""
    pos = ax.get_yticks()
    values = [float(t.get_text()) for t in ax.get_yticklabels()]
    slope, offset = np.polyfit(pos, values, 1)
    return lambda y: slope * y + offset


def test_bars_sit_at_the_free_value_without_offsets(c60, c60_fcc):
    table = find_table("C60")
    art = line_pattern([("Fm-3", c60_fcc), ("Pa-3", c60)], "C60", modes=table)
    assert not art.estimated
    to_cm1 = _y_to_cm1(art.ax)
    free = {m.name: m.wavenumber_cm1 for m in table.modes}
    for s in art.sticks:
        y = s.line.get_ydata()
        assert y[0] == y[1]
        assert to_cm1(y[0]) == pytest.approx(free[s.mode], abs=0.5)
        assert s.wavenumber_cm1 == pytest.approx(free[s.mode])
        assert not s.estimated
    # every column of one band at the same height: nothing moved to suggest a splitting
    for mode in free:
        ys = {round(s.line.get_ydata()[0], 6) for s in art.sticks if s.mode == mode}
        assert len(ys) <= 1
    assert "not predicted" in art.note.get_text()
    assert not text_overlaps(art.texts(), art.figure.canvas.get_renderer())


def test_number_of_components_is_shown(c60):
    art = line_pattern([("Pa-3", c60)], "C60")
    hg = {sp: t.get_text() for col, band, sp, t in art.labels if col == "Pa-3" and band == "Hg"}
    # Hg of Ih at an S6 site of Th: Ag + 2Eg + 5Tg (the engine's correlation)
    assert hg == {"Ag": "A$_{g}$", "Eg": "2E$_{g}$", "Tg": "5T$_{g}$"}
    assert art.components("Pa-3", "Hg") == {"Ag": 1, "Eg": 2, "Tg": 5}
    # one bar per species, shared by its components
    assert len({id(s.line) for s in art.sticks if s.column == "Pa-3" and s.band == "Hg"}) == 3
    assert "not predicted" in art.note.get_text()
    assert all(s.wavenumber_cm1 is None for s in art.sticks)


@pytest.fixture(scope="module")
def co2_estimate(structures_dir, tmp_path_factory):
    from splitting.dynamics import EstimateOptions, estimate

    cache = tmp_path_factory.mktemp("hessians")
    return estimate(structures_dir / "co2_Pa-3.cif", model=EstimateOptions(cache=str(cache)))


@pytest.fixture(scope="module")
def co2_prediction(structures_dir):
    from splitting.crystal.predict import predict

    return predict(structures_dir / "co2_Pa-3.cif")


def test_bars_at_estimated_positions(co2_prediction, co2_estimate):
    art = line_pattern([("Pa-3", co2_prediction)], "CO2", estimates=[co2_estimate])
    assert art.estimated
    assert [b for b, _, _ in art.bands] == ["Σu+", "Σg+", "Πu", "lattice"]
    assert [band for band, _ in art.panels] == ["Σu+", "Σg+", "Πu", "lattice"]
    for s in art.sticks:
        assert s.estimated and s.line.get_ydata()[0] == pytest.approx(s.wavenumber_cm1)
    drawn = sorted((s.species, round(s.wavenumber_cm1, 3)) for s in art.sticks if s.column == "Pa-3")
    model = sorted((ln.species, round(ln.wavenumber_cm1, 3)) for ln in co2_estimate.lines if ln.origin != "acoustic")
    assert drawn == model
    nu2 = [s for s in art.sticks if s.column == "Pa-3" and s.mode == "nu2"]
    assert sorted(s.species for s in nu2) == ["Eu", "Tu", "Tu"]
    free = next(s for s in art.sticks if s.column == "free" and s.mode == "nu2")
    assert free.wavenumber_cm1 == pytest.approx(next(b.free_cm1 for b in co2_estimate.bands if b.band == "nu2"))
    # every panel's axis spans its own band
    for band, ax in art.panels:
        lo, hi = ax.get_ylim()
        ws = [s.wavenumber_cm1 for s in art.sticks if s.band == band]
        assert lo < min(ws) and max(ws) < hi
    assert "model estimates" in art.note.get_text() and "williams" in art.note.get_text()
    assert not text_overlaps(art.texts(), art.figure.canvas.get_renderer())


def test_estimated_pattern_of_one_band(co2_prediction, co2_estimate):
    art = line_pattern([("Pa-3", co2_prediction)], "CO2", estimates=[co2_estimate], band="nu2")
    assert [b for b, _, _ in art.bands] == ["Πu"]
    lattice = line_pattern([("Pa-3", co2_prediction)], "CO2", estimates=[co2_estimate], band="lattice")
    assert {s.band for s in lattice.sticks} == {"lattice"}
    assert len(lattice.sticks) == len(co2_estimate.lattice_lines())


def test_estimates_must_match_the_phases(co2_prediction, co2_estimate, calcite):
    with pytest.raises(InputError, match="one per phase"):
        line_pattern([("Pa-3", co2_prediction)], "CO2", estimates=[co2_estimate, co2_estimate])
    with pytest.raises(InputError, match="no band"):
        line_pattern([("Pa-3", co2_prediction)], "CO2", estimates=[co2_estimate], band="nu9")
    with pytest.raises(InputError, match="factor group"):
        line_pattern([("calcite", calcite)], "CO3", estimates=[co2_estimate])


def test_cli_draw_at_the_estimate(run_cli, structures_dir, tmp_path):
    out = tmp_path / "lines.svg"
    code, stdout, err = run_cli(
        ["draw", structures_dir / "co2_Pa-3.cif", "--kind", "lines", "--estimate", "--cache", tmp_path, "-o", out]
    )
    assert code == 0, err
    assert out.read_bytes().startswith(b"<?xml") and "figure written" in stdout


@pytest.mark.parametrize(
    "extra, words",
    [
        (["--estimate"], "--kind lines"),
        (["--kind", "lines", "--cache", "."], "--estimate"),
        (["--kind", "lines", "--estimate", "--cache", "/nonexistent/folder"], "no such folder"),
    ],
)
def test_cli_draw_estimate_options_never_ignored(run_cli, structures_dir, tmp_path, extra, words):
    out = tmp_path / "lines.svg"
    code, stdout, err = run_cli(["draw", structures_dir / "co2_Pa-3.cif", *extra, "-o", out])
    assert code != 0 and stdout == "" and not out.exists()
    assert err.startswith("error:") and words in err and len(err.strip().splitlines()) == 1
