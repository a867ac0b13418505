"""The model estimate where it shows outside its own command: predict and compare tables,
explain (closer matches rank higher) and the HTML report.

Solid CO2 (Pa-3); free-unit Hessians cached in a temporary folder.  Measured lines here
are invented test data.
"""

from __future__ import annotations

import json

import pytest

from splitting.dynamics import EstimateOptions, estimate
from splitting.errors import InputError
from splitting.spectra.assign import explain
from splitting.spectra.measured import Peak, PeakList


@pytest.fixture(scope="module")
def cache(tmp_path_factory):
    return tmp_path_factory.mktemp("hessians")


@pytest.fixture(scope="module")
def co2_est(structures_dir, cache):
    return estimate(structures_dir / "co2_Pa-3.cif", model=EstimateOptions(cache=str(cache)))


@pytest.fixture(scope="module")
def co2_pred(structures_dir):
    from splitting.crystal.predict import predict

    return predict(structures_dir / "co2_Pa-3.cif")


def test_predict_column(run_cli, structures_dir, cache, co2_est):
    code, out, err = run_cli(["predict", structures_dir / "co2_Pa-3.cif", "--estimate", "--cache", cache])
    assert code == 0, err
    assert "model cm-1 (estimate)" in out and "lattice cm-1 (estimate)" in out
    nu2 = next(b for b in co2_est.bands if b.band == "nu2")
    ws = [w for _, w in nu2.components]
    assert f"nu2 {min(ws):.1f}-{max(ws):.1f}" in out
    assert "estimate columns: harmonic" in out
    code, out, _ = run_cli(["predict", structures_dir / "co2_Pa-3.cif", "--estimate", "--cache", cache, "--json"])
    data = json.loads(out)
    assert data["estimate"]["factor_group"] == "Th" and data["species"]
    # without --estimate nothing changes
    code, out, _ = run_cli(["predict", structures_dir / "co2_Pa-3.cif"])
    assert "estimate" not in out


def test_compare_columns(run_cli, structures_dir, cache):
    f = structures_dir / "co2_Pa-3.cif"
    code, out, err = run_cli(["compare", f, f, "--labels", "a", "b", "--estimate", "--cache", cache])
    assert code == 0, err
    assert "model cm-1, a" in out and "model cm-1, b" in out and "a, model estimate (cm-1):" in out
    code, out, _ = run_cli(["compare", f, f, "--labels", "a", "b", "--estimate", "--cache", cache, "--json"])
    assert len(json.loads(out)["estimates"]) == 2


@pytest.mark.parametrize(
    "argv, words",
    [
        (["predict", "co2_Pa-3.cif", "--cache", "."], "--estimate"),
        (["predict", "co2_Pa-3.cif", "--estimate", "--disordered"], "ordered"),
        (["compare", "co2_Pa-3.cif", "co2_Pa-3.cif", "--estimate", "--cache", "/nonexistent/folder"], "no such folder"),
        (["explain", "co2_Pa-3.cif", "--peaks", "x.csv", "--cache", "."], "--estimate"),
    ],
)
def test_estimate_options_never_ignored(run_cli, structures_dir, argv, words):
    argv = [structures_dir / a if a.endswith(".cif") else a for a in argv]
    code, out, err = run_cli(argv)
    assert code != 0 and out == ""
    assert err.startswith("error:") and words in err and len(err.strip().splitlines()) == 1


def _score(expl, x, kind):
    line = next(le for le in expl.lines if le.peak.position_cm1 == x)
    return next(c for c in line.candidates if c.kind == kind)


def test_explain_ranks_closer_matches_higher(co2_pred, co2_est):
    nu2 = next(b for b in co2_est.bands if b.band == "nu2")
    tu = max(w for s, w in nu2.components if s == "Tu")
    free = 667.0  # CO2 nu2 of the bundled mode table
    near = round(free + tu - nu2.free_cm1, 1)  # where the model puts the upper Tu component
    far = round(free - (near - free), 1)  # as far from the free value on the other side
    peaks = PeakList((Peak(near, 1.0), Peak(far, 1.0)), technique="ir", source="invented")
    plain = explain(co2_pred, peaks)
    assert _score(plain, near, "fundamental").score == pytest.approx(_score(plain, far, "fundamental").score)
    ranked = explain(co2_pred, peaks, estimate=co2_est)
    a, b = _score(ranked, near, "fundamental"), _score(ranked, far, "fundamental")
    assert a.score > b.score and "model estimate" in a.reason
    assert any("model estimate" in n for n in ranked.notes)


def test_explain_lattice_lines_by_the_estimate(co2_pred, co2_est):
    raman = sorted(ln.wavenumber_cm1 for ln in co2_est.lattice_lines() if "Raman" in ln.activity)
    close, off = round(raman[1], 1), round((raman[1] + raman[2]) / 2, 1)
    peaks = PeakList((Peak(close, 1.0), Peak(off, 1.0)), technique="raman", source="invented")
    plain = explain(co2_pred, peaks)
    assert _score(plain, close, "lattice").score == _score(plain, off, "lattice").score
    ranked = explain(co2_pred, peaks, estimate=co2_est)
    assert _score(ranked, close, "lattice").score > _score(ranked, off, "lattice").score


def test_report_section(co2_pred, co2_est):
    from splitting.report.html import html_report

    page = html_report([("Pa-3", co2_pred)], estimates=[co2_est])
    assert 'id="estimate"' in page and 'href="#estimate"' in page
    assert "not from a measurement" in page and "<svg" in page.split('id="estimate"')[1]
    nu2 = next(b for b in co2_est.bands if b.band == "nu2")
    assert f"{nu2.splitting_cm1:.1f}" in page.split('id="estimate"')[1]
    assert 'id="estimate"' not in html_report([("Pa-3", co2_pred)])
    with pytest.raises(InputError, match="one per phase"):
        html_report([("Pa-3", co2_pred)], estimates=[co2_est, co2_est])


def test_cli_report_with_estimate(run_cli, structures_dir, cache, tmp_path):
    out = tmp_path / "r.html"
    code, _, err = run_cli(["report", structures_dir / "co2_Pa-3.cif", "--estimate", "--cache", cache, "-o", out])
    assert code == 0, err
    assert 'id="estimate"' in out.read_text()
