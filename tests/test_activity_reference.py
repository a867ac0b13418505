"""Infrared and Raman selection rules and Raman-tensor forms against published tables.

Sources:

* Loudon: R. Loudon, Adv. Phys. 13, 423 (1964), Table 2, Raman tensors of the 32 crystal classes.
* Cotton: F. A. Cotton, *Chemical Applications of Group Theory*, 3rd ed., Wiley (1990),
  Appendix IIA (linear and quadratic functions column of each character table).
* DPT: T. C. Damen, S. P. S. Porto and B. Tell, Phys. Rev. 142, 570 (1966): scattering-geometry notation.
* Herzberg: G. Herzberg, *Molecular Spectra and Molecular Structure II* (1945), linear groups.

Tables were not open while these checks were typed: all values are "from memory".  The
mutual-exclusion rule and "IR = species of (x, y, z), Raman = species of the quadratic
forms" are common practice (and theorems).
"""

from __future__ import annotations

import pytest

from splitting.activity import activity_of, activity_table, parse_geometry
from splitting.errors import InputError
from splitting.groups import all_group_names, point_group


def table(name: str) -> dict[str, object]:
    return {a.label: a for a in activity_table(name)}


def zero_pattern(tensor) -> tuple[tuple[bool, ...], ...]:
    return tuple(tuple(cell != "0" for cell in row) for row in tensor)


def pattern(*elements: str) -> tuple[tuple[bool, ...], ...]:
    idx = {"x": 0, "y": 1, "z": 2}
    cells = [[False] * 3 for _ in range(3)]
    for e in elements:
        i, j = idx[e[0]], idx[e[1]]
        cells[i][j] = cells[j][i] = True
    return tuple(tuple(r) for r in cells)


# ------------------------------------------------------------------ D4h


def test_d4h_infrared():
    # Cotton App. IIA, D4h (from memory): z in A2u, (x, y) in Eu; nothing else IR active
    t = table("D4h")
    assert {lab: a.ir for lab, a in t.items() if a.ir} == {"A2u": ("z",), "Eu": ("x", "y")}


def test_d4h_raman_functions():
    # Cotton App. IIA, D4h (from memory): A1g x^2+y^2, z^2; B1g x^2-y^2; B2g xy; Eg (xz, yz)
    t = table("D4h")
    assert {lab for lab, a in t.items() if a.raman} == {"A1g", "B1g", "B2g", "Eg"}
    assert set(t["A1g"].raman) == {"x²+y²", "z²"}
    assert t["B1g"].raman == ("x²-y²",)
    assert t["B2g"].raman == ("xy",)
    assert set(t["Eg"].raman) == {"xz", "yz"}


def test_d4h_raman_tensors_have_loudons_form():
    # Loudon Table 2, class 4/mmm (from memory):
    # A1g (a 0 0; 0 a 0; 0 0 b), B1g (c 0 0; 0 -c 0; 0 0 0), B2g (0 d 0; d 0 0; 0 0 0),
    # Eg (0 0 -e; 0 0 0; -e 0 0) and (0 0 0; 0 0 e; 0 e 0)
    t = table("D4h")
    a1g = t["A1g"].raman_tensor
    assert zero_pattern(a1g) == pattern("xx", "yy", "zz")
    assert a1g[0][0] == a1g[1][1] != a1g[2][2]
    b1g = t["B1g"].raman_tensor
    assert zero_pattern(b1g) == pattern("xx", "yy")
    assert b1g[1][1] == "-" + b1g[0][0]
    assert zero_pattern(t["B2g"].raman_tensor) == pattern("xy")
    eg = t["Eg"].raman_tensor
    assert zero_pattern(eg) == pattern("xz", "yz")
    assert eg[0][2] != eg[1][2]  # two partners, independent constants
    for lab in ("A2g", "A1u", "A2u", "B1u", "B2u", "Eu"):
        assert zero_pattern(t[lab].raman_tensor) == pattern()


def test_d4h_backscattering_geometries():
    # DPT notation; with Loudon's tensors: z(xx)-z sees A1g and B1g, z(xy)-z sees B2g (from memory)
    t = table("D4h")
    xx, xy = parse_geometry("z(xx)-z"), parse_geometry("z(xy)z̄")
    assert {lab for lab, a in t.items() if xx.sees(a)} == {"A1g", "B1g"}
    assert {lab for lab, a in t.items() if xy.sees(a)} == {"B2g"}
    assert str(xy) == "z(xy)-z"
    with pytest.raises(InputError):
        parse_geometry("z(xq)z")


# ------------------------------------------------------------------ cubic


def test_oh_mutual_exclusion_and_active_species():
    # Cotton App. IIA, Oh (from memory): IR T1u; Raman A1g, Eg, T2g
    t = table("Oh")
    assert [lab for lab, a in t.items() if a.ir] == ["T1u"]
    assert [lab for lab, a in t.items() if a.raman] == ["A1g", "Eg", "T2g"]
    assert not any(a.ir and a.raman for a in t.values())


def test_oh_and_td_tensors():
    # Loudon Table 2, classes m3m and -43m (from memory): A1 (a a a), E (b b -2b) and (-sqrt3 b, sqrt3 b, 0),
    # T2 one off-diagonal element (d) per partner
    for name, a1, e, t2 in (("Oh", "A1g", "Eg", "T2g"), ("Td", "A1", "E", "T2")):
        t = table(name)
        ta1 = t[a1].raman_tensor
        assert zero_pattern(ta1) == pattern("xx", "yy", "zz")
        assert ta1[0][0] == ta1[1][1] == ta1[2][2]
        assert zero_pattern(t[e].raman_tensor) == pattern("xx", "yy", "zz")
        assert len(t[e].raman) == 2
        assert zero_pattern(t[t2].raman_tensor) == pattern("xy", "xz", "yz")
        assert set(t[t2].raman) == {"xy", "xz", "yz"}


def test_td_t2_is_both_infrared_and_raman_active():
    # Cotton App. IIA, Td (from memory): (x, y, z) and (xy, xz, yz) both in T2
    t2 = activity_of("Td", "T2")
    assert t2.ir == ("x", "y", "z")
    assert t2.ir_active and t2.raman_active
    assert [lab for lab, a in table("Td").items() if a.ir and a.raman] == ["T2"]
    with pytest.raises(InputError):
        activity_of("Td", "T1u")


def test_ih_raman_is_ag_and_hg():
    # Cotton App. IIA, Ih (from memory): IR T1u; Raman Ag (x^2+y^2+z^2) and Hg (five quadratic forms)
    t = table("Ih")
    assert [lab for lab, a in t.items() if a.ir] == ["T1u"]
    assert [lab for lab, a in t.items() if a.raman] == ["Ag", "Hg"]
    assert len(t["Hg"].raman) == 5


# ------------------------------------------------------------------ low symmetry


def test_c2v_tensors_with_sigma_v_xz():
    # Loudon Table 2, class mm2 (from memory), with x in B1: A1 (a 0 0; 0 b 0; 0 0 c), A2 xy, B1 xz, B2 yz
    t = table("C2v")
    assert zero_pattern(t["A1"].raman_tensor) == pattern("xx", "yy", "zz")
    assert zero_pattern(t["A2"].raman_tensor) == pattern("xy")
    assert zero_pattern(t["B1"].raman_tensor) == pattern("xz")
    assert zero_pattern(t["B2"].raman_tensor) == pattern("yz")
    assert t["A2"].ir == () and t["A2"].raman_active  # A2: Raman only (Cotton, from memory)


def test_d2h_tensors():
    # Loudon Table 2, class mmm (from memory): Ag diagonal, B1g xy, B2g xz, B3g yz;
    # IR: B1u z, B2u y, B3u x
    t = table("D2h")
    assert zero_pattern(t["B1g"].raman_tensor) == pattern("xy")
    assert zero_pattern(t["B2g"].raman_tensor) == pattern("xz")
    assert zero_pattern(t["B3g"].raman_tensor) == pattern("yz")
    assert (t["B1u"].ir, t["B2u"].ir, t["B3u"].ir) == (("z",), ("y",), ("x",))


# ------------------------------------------------------------------ linear


def test_linear_groups():
    # Herzberg (1945) / Cotton App. IIA (from memory): D∞h IR Σu+ (z), Πu (x, y); Raman Σg+, Πg, Δg;
    # C∞v: Σ+ and Π both IR and Raman, Δ Raman only
    d = table("D∞h")
    assert {lab: a.ir for lab, a in d.items() if a.ir} == {"Σu+": ("z",), "Πu": ("x", "y")}
    assert {lab for lab, a in d.items() if a.raman} == {"Σg+", "Πg", "Δg"}
    c = table("C∞v")
    assert {lab for lab, a in c.items() if a.ir} == {"Σ+", "Π"}
    assert {lab for lab, a in c.items() if a.raman} == {"Σ+", "Π", "Δ"}


# ------------------------------------------------------------------ every group


@pytest.mark.parametrize("name", all_group_names())
def test_activity_agrees_with_vector_and_polarisability(name):
    g = point_group(name)
    t = activity_table(name)
    assert [a.label for a in t] == list(g.labels)
    ir = {a.label for a in t if a.ir}
    raman = {a.label for a in t if a.raman}
    assert ir == set(g.vector.labels)
    assert raman == set(g.raman.labels)
    # each Cartesian axis in exactly one species, each tensor element reached by some species
    axes = [c for a in t for c in a.ir]
    assert sorted(axes) == ["x", "y", "z"]
    elements = {e for a in t for e in a.raman_elements}
    assert elements == {"xx", "yy", "zz", "xy", "xz", "yz"}
    # the number of quadratic functions of a species equals its multiplicity in Sym^2(V) times dimension
    for a in t:
        s = g.get_species(a.label)
        assert len(a.raman) == g.raman[a.label] * s.dimension
        assert len(a.ir) == g.vector[a.label] * s.dimension


@pytest.mark.parametrize("name", [n for n in all_group_names() if point_group(n).centrosymmetric])
def test_mutual_exclusion_in_centrosymmetric_groups(name):
    # rule of mutual exclusion (common practice): IR species are u, Raman species are g
    for a in activity_table(name):
        if a.ir:
            assert a.label.endswith("u") and not a.raman
        if a.raman:
            assert a.label.endswith("g")


def test_to_dict_is_plain():
    import json

    d = activity_of("D4h", "Eg").to_dict()
    assert json.loads(json.dumps(d)) == d
    assert d["raman"] == ["xz", "yz"] and d["ir"] == []


@pytest.mark.parametrize(
    ("group", "label", "forms"),
    [
        # E species in the forms of the standard character tables (Wilson, Decius and Cross,
        # Molecular Vibrations, 1955, Appendix X; common practice in every later table)
        ("Oh", "Eg", ("x²-y²", "2z²-x²-y²")),
        ("Td", "E", ("x²-y²", "2z²-x²-y²")),
        ("Th", "Eg", ("x²-y²", "2z²-x²-y²")),
        ("D4h", "Eg", ("xz", "yz")),
        ("D6h", "E2g", ("x²-y²", "xy")),
        ("D3h", "E'", ("x²-y²", "xy")),
        ("D3d", "Eg", ("x²-y²", "xy", "xz", "yz")),
        ("Oh", "T2g", ("xy", "xz", "yz")),
    ],
)
def test_degenerate_raman_functions_in_usual_forms(group, label, forms):
    from splitting.activity import activity_of

    assert activity_of(group, label).raman == forms
