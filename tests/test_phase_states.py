"""The state of each phase (ordered, static disorder, rotor), given per phase and stated everywhere.

Reference: in the rotor (plastic) fcc phase of C60 above ~260 K the spectrum is that of the
free molecule: 10 Raman lines (2Ag + 8Hg) and 4 IR lines (4T1u) (D. S. Bethune, G. Meijer,
W. C. Tang, H. J. Rosen, W. G. Golden, H. Seki, C. A. Brown and M. S. de Vries, Chem. Phys.
Lett. 179, 181 (1991); M. S. Dresselhaus, G. Dresselhaus and P. C. Eklund, Science of
Fullerenes and Carbon Nanotubes, Academic Press 1996, ch. 11). The static reading of the
same file (one orientation at the Th site) splits Hg into Eg + Tg and activates Gg -> Ag + Tg,
T1g and T2g -> Tg in Raman (Th character table, Wilson, Decius and Cross 1955).
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from splitting.errors import InputError
from splitting.phases.compare import compare_phases
from splitting.phases.disorder import predict_disordered

S = Path(__file__).resolve().parent.parent / "structures"
WARM = S / "c60_fcc_Fm-3m_disordered.cif"
COLD = S / "c60_ordered_Pa-3.cif"
NH4_DIS = S / "nh4cl_disordered_Pm-3m.cif"
NH4_ORD = S / "nh4cl_ordered_P-43m.cif"


def _counts(band_states):
    return sum(b.modes * b.ir for b in band_states), sum(b.modes * b.raman for b in band_states)


def test_c60_rotor_phase_has_the_free_molecule_counts():
    d = predict_disordered(WARM, states={"*": "rotor"})
    (u,) = d.units
    assert u.state == "dynamic" and u.state_given and d.state == "dynamic" and not d.warnings
    readings = {st: (ir, ra) for st, ir, ra in u.readings}
    assert readings["dynamic"] == (4, 10)  # 4T1u IR, 2Ag + 8Hg Raman (Bethune et al. 1991)
    seq = compare_phases([WARM, COLD], ["300 K", "90 K"], phase_states=[{"*": "rotor"}, {}])
    warm, cold = seq.phases
    assert (warm.state, cold.state) == ("dynamic", "ordered")
    assert _counts(warm.bands()) == (4, 10)
    raman = {b.band: b.raman for b in warm.bands() if b.raman}
    assert raman == {"Ag": 1, "Hg": 1}  # per fundamental: one line, no splitting
    d = seq.to_dict()
    assert [p["state"] for p in d["phases"]] == ["dynamic", "ordered"]
    assert "rotor" in d["phases"][0]["state_meaning"]


def test_open_state_takes_static_with_a_warning_giving_each_reading():
    d = predict_disordered(WARM)
    (u,) = d.units
    assert u.state == "static" and not u.state_given
    (w,) = d.warnings
    assert "static disorder taken (default)" in w and "dynamic 4/10" in w
    assert d.to_dict()["warnings"] == [w]
    # the static reading: Hg -> Eg + Tg at the Th site of one orientation (see module docstring)
    hg = next(p for p in u.pattern if p.free == "Hg")
    assert str(hg.site) == "Eg + Tg"


def test_states_by_written_name_and_bad_names():
    d = predict_disordered(NH4_DIS, states={"NH4+": "rotor"})
    assert d.units[0].state == "dynamic" and d.units[0].name == "NH4+"
    assert predict_disordered(NH4_DIS, states={"H4N": "static"}).units[0].state == "static"
    with pytest.raises(InputError, match=r"matches no unit.*NH4\+ \(H4N\)"):
        predict_disordered(NH4_DIS, states={"SO4^2-": "rotor"})
    with pytest.raises(InputError, match="not a state"):
        predict_disordered(NH4_DIS, states={"NH4": "spinning"})


def test_cli_state_per_phase(run_cli):
    code, out, err = run_cli(["compare", WARM, COLD, "--labels", "300 K", "90 K", "--state", "300 K=rotor", "--json"])
    assert code == 0 and err == ""
    d = json.loads(out)
    assert [p["state"] for p in d["phases"]] == ["dynamic", "ordered"]
    # by file name and by number; one unit of one phase
    for spec in ("c60_fcc_Fm-3m_disordered.cif=rotor", "1=rotor", "1:C60=rotor"):
        code, out, _ = run_cli(["compare", WARM, COLD, "--state", spec, "--json"])
        assert code == 0 and json.loads(out)["phases"][0]["state"] == "dynamic"
    code, out, err = run_cli(["compare", WARM, COLD, "--json"])
    assert code == 0 and "warning:" in err and "static disorder taken" in err
    assert json.loads(out)["phases"][0]["warnings"]


def test_cli_state_errors(run_cli):
    for args, text in (
        (["compare", WARM, COLD, "--state", "rotor"], "say which phase"),
        (["compare", WARM, COLD, "--state", "5 K=rotor"], "names no phase"),
        (["compare", WARM, COLD, "--state", "1=spinning"], "not a state"),
        (["compare", WARM, COLD, "--rotor", "3:C60"], "names no phase"),
        (["predict", WARM, "--state", "SO4=rotor"], "matches no unit"),
    ):
        code, out, err = run_cli(args)
        assert code != 0 and out == "" and err.startswith("error:") and text in err, (args, err)
        assert err.count("\n") == 1


def test_cli_predict_rotor_text(run_cli):
    code, out, err = run_cli(["predict", WARM, "--state", "rotor"])
    assert code == 0 and err == ""
    assert "phase state: rotor (dynamic disorder)" in out and "dynamic 4 / 10" in out
    code, out, err = run_cli(["predict", COLD])
    assert "state: ordered" in out


def test_report_and_draw_state_each_phase(run_cli, tmp_path):
    html = tmp_path / "r.html"
    code, _, _ = run_cli(["report", WARM, COLD, "--labels", "300 K", "90 K", "--state", "300 K=rotor", "-o", html])
    assert code == 0
    page = html.read_text()
    assert "300 K (rotor phase" in page and "90 K (ordered)" in page and "4 IR / 10 Raman" in page
    svg = tmp_path / "d.svg"
    code, out, _err = run_cli(["draw", WARM, "--state", "rotor", "-o", svg])
    assert code == 0 and "rotor phase" in svg.read_text() and "rotor" in out


def test_explain_rotor_counts_free_unit_lines(run_cli, tmp_path):
    peaks = tmp_path / "p.csv"
    peaks.write_text("# technique: raman\n1469,10\n1575,5\n496,3\n272,4\n")  # invented list
    code, out, _err = run_cli(["explain", WARM, "--peaks", peaks, "--state", "rotor", "--json"])
    assert code == 0
    d = json.loads(out)
    assert d["state"] == "dynamic"
    (comp,) = d["comparisons"]
    assert {b["band"]: b["predicted"] for b in comp["bands"]}["Hg(8)"] == 1
    assert all(b["predicted"] == 0 for b in comp["bands"] if b["species"] == "T1u")


def test_demo_warm_phase_is_the_rotor_phase(tmp_path):
    from splitting.demo import run_demo

    out = run_demo(tmp_path / "demo")
    phases = json.loads((out.folder / "phases.json").read_text())["phases"]
    assert [p["state"] for p in phases] == ["dynamic", "ordered"]
    assert "rotor phase" in (out.folder / "report.html").read_text()
