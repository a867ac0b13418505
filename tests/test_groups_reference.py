"""Character tables, direct products and symmetric squares checked against published tables.

Sources (abbreviations used beside every check):

* Cotton: F. A. Cotton, *Chemical Applications of Group Theory*, 3rd ed., Wiley (1990),
  Appendix IIA (character tables) and ch. 7 (products).
* WDC: E. B. Wilson, J. C. Decius and P. C. Cross, *Molecular Vibrations*, McGraw-Hill (1955),
  Appendix X (character tables, symmetric powers of degenerate species).
* Herzberg: G. Herzberg, *Molecular Spectra and Molecular Structure II*, Van Nostrand (1945),
  tables of the linear groups and of overtone species.

The tables were not open while these values were typed: every one is "from memory", and
each is also a consequence of the group's structure that the invariant tests check.
Class names follow the engine (its class order may differ from the books); characters are
looked up by class name, so only the names below matter.
"""

from __future__ import annotations

import numpy as np
import pytest

from splitting.groups import linear_group, point_group

GOLDEN = (1 + 5**0.5) / 2


def chars(group: str, label: str) -> dict[str, float]:
    g = point_group(group)
    s = g.get_species(label)
    return {c.name: x for c, x in zip(g.classes, s.characters, strict=True)}


def assert_chars(group: str, label: str, expected: dict[str, float]) -> None:
    got = chars(group, label)
    for cls, value in expected.items():
        assert cls in got, f"{group} has no class {cls}: {list(got)}"
        assert np.isclose(got[cls], value), f"{group} {label} at {cls}: {got[cls]} != {value}"


# ------------------------------------------------------------------ character spot checks


def test_d3h_e_prime_and_e_double_prime():
    # Cotton App. IIA, D3h (from memory): E' = 2 -1 0 | 2 -1 0 ; E'' = 2 -1 0 | -2 1 0
    # over E 2C3 3C2 sigma_h 2S3 3sigma_v
    assert_chars("D3h", "E'", {"E": 2, "2C3": -1, "3C2'": 0, "σh": 2, "2S3": -1, "3σv": 0})
    assert_chars("D3h", "E''", {"E": 2, "2C3": -1, "3C2'": 0, "σh": -2, "2S3": 1, "3σv": 0})
    # (x, y) in E', z in A2'' (Cotton App. IIA, from memory)
    assert str(point_group("D3h").vector) == "E' + A2''"


def test_ih_t1u_has_the_golden_ratio_at_c5():
    # Cotton App. IIA, Ih (from memory): T1u = 3, (1+sqrt5)/2, (1-sqrt5)/2, 0, -1 | -3, ..., 1 under sigma
    assert_chars(
        "Ih",
        "T1u",
        {"E": 3, "12C5": GOLDEN, "12C5^2": 1 - GOLDEN, "20C3": 0, "15C2": -1, "i": -3, "20S6": 0, "15σ": 1},
    )
    # Hg = 5 0 0 -1 1 ; Gg = 4 -1 -1 1 0 (Cotton App. IIA, from memory)
    assert_chars("Ih", "Hg", {"E": 5, "12C5": 0, "12C5^2": 0, "20C3": -1, "15C2": 1, "i": 5})
    assert_chars("Ih", "Gg", {"E": 4, "12C5": -1, "12C5^2": -1, "20C3": 1, "15C2": 0, "i": 4})
    assert_chars("Ih", "T2g", {"E": 3, "12C5": 1 - GOLDEN, "12C5^2": GOLDEN, "20C3": 0, "15C2": -1})
    assert str(point_group("Ih").vector) == "T1u"  # (x, y, z) in T1u (Cotton, from memory)


def test_td_t2_carries_the_vector():
    # Cotton App. IIA, Td (from memory): T2 = 3 0 -1 -1 1 over E 8C3 3C2 6S4 6sigma_d; (x, y, z) in T2
    assert_chars("Td", "T2", {"E": 3, "8C3": 0, "3C2": -1, "6S4": -1, "6σd": 1})
    assert_chars("Td", "T1", {"E": 3, "8C3": 0, "3C2": -1, "6S4": 1, "6σd": -1})
    assert_chars("Td", "E", {"E": 2, "8C3": -1, "3C2": 2, "6S4": 0, "6σd": 0})
    assert str(point_group("Td").vector) == "T2"
    assert str(point_group("Td").axial) == "T1"


def test_d2d_b2_contains_z():
    # Cotton App. IIA, D2d (from memory): B2 = 1 -1 1 -1 1 over E 2S4 C2 2C2' 2sigma_d; z in B2, (x, y) in E
    assert_chars("D2d", "B2", {"E": 1, "2S4": -1, "C2": 1, "2C2'": -1, "2σd": 1})
    assert str(point_group("D2d").vector) == "B2 + E"


def test_c2v_with_sigma_v_xz_puts_x_in_b1():
    # Cotton App. IIA, C2v (from memory): A1 z, B1 x (symmetric under sigma_v(xz)), B2 y
    g = point_group("C2v")
    assert_chars("C2v", "B1", {"E": 1, "C2": -1, "σv(xz)": 1, "σv'(yz)": -1})
    assert_chars("C2v", "B2", {"E": 1, "C2": -1, "σv(xz)": -1, "σv'(yz)": 1})
    assert g.vector.as_dict() == {"A1": 1, "B1": 1, "B2": 1}
    from splitting.activity import activity_table

    ir = {a.label: a.ir for a in activity_table("C2v")}
    assert ir == {"A1": ("z",), "A2": (), "B1": ("x",), "B2": ("y",)}


def test_d6h_b1g_is_symmetric_under_c2_prime():
    # Cotton App. IIA, D6h (from memory): B1g = 1 -1 1 -1 1 -1 | 1 -1 1 -1 (sigma_d) 1 (sigma_v) -1,
    # with C2' the axes in the sigma_v planes
    assert_chars("D6h", "B1g", {"E": 1, "2C6": -1, "2C3": 1, "C2": -1, "3C2'": 1, "3C2''": -1, "i": 1,
                                "σh": -1, "3σd": 1, "3σv": -1})  # fmt: skip
    assert_chars("D6h", "B2g", {"3C2'": -1, "3C2''": 1})
    assert_chars("D6h", "E2g", {"E": 2, "2C6": -1, "2C3": -1, "C2": 2, "3C2'": 0, "i": 2})
    assert str(point_group("D6h").vector) == "A2u + E1u"


def test_d4h_b1g_and_b2g():
    # Cotton App. IIA, D4h (from memory): B1g (x^2-y^2) = 1 -1 1 1 -1 ; B2g (xy) = 1 -1 1 -1 1
    # over E 2C4 C2 2C2' 2C2''
    assert_chars("D4h", "B1g", {"E": 1, "2C4": -1, "C2": 1, "2C2'": 1, "2C2''": -1, "2σv": 1, "2σd": -1})
    assert_chars("D4h", "B2g", {"E": 1, "2C4": -1, "C2": 1, "2C2'": -1, "2C2''": 1, "2σv": -1, "2σd": 1})


def test_oh_selected_rows():
    # Cotton App. IIA, Oh (from memory): T1u = 3 0 -1 1 -1 | -3 -1 0 1 1 over
    # E 8C3 6C2 6C4 3C2(=C4^2) | i 6S4 8S6 3sigma_h 6sigma_d
    assert_chars("Oh", "T1u", {"E": 3, "8C3": 0, "6C2'": -1, "6C4": 1, "3C2": -1,
                               "i": -3, "6S4": -1, "8S6": 0, "3σh": 1, "6σd": 1})  # fmt: skip
    assert_chars("Oh", "Eg", {"E": 2, "8C3": -1, "6C2'": 0, "6C4": 0, "3C2": 2, "i": 2})
    assert_chars("Oh", "T2g", {"E": 3, "8C3": 0, "6C2'": 1, "6C4": -1, "3C2": -1, "i": 3})


def test_c3v_and_d5h():
    # Cotton App. IIA (from memory): C3v E = 2 -1 0; D5h E1' = 2, 2cos72, 2cos144, 0, 2 (sigma_h)
    assert_chars("C3v", "E", {"E": 2, "2C3": -1, "3σv": 0})
    c72, c144 = 2 * np.cos(2 * np.pi / 5), 2 * np.cos(4 * np.pi / 5)
    assert_chars("D5h", "E1'", {"E": 2, "2C5": c72, "2C5^2": c144, "5C2'": 0, "σh": 2, "5σv": 0})
    assert_chars("D5h", "E2'", {"E": 2, "2C5": c144, "2C5^2": c72, "5C2'": 0, "σh": 2, "5σv": 0})


def test_separably_degenerate_pairs_are_merged():
    # common practice in vibrational spectroscopy: a complex-conjugate pair is one species E
    # (Cotton App. IIA prints both rows bracketed as E, from memory)
    for name, label in (("C3", "E"), ("C4", "E"), ("S4", "E"), ("C3h", "E'"), ("T", "E"), ("Th", "Eg")):
        s = point_group(name).get_species(label)
        assert s.dimension == 2 and s.separably_degenerate
    assert point_group("S4").labels == ("A", "B", "E")  # Cotton App. IIA (from memory)
    assert str(point_group("S4").vector) == "B + E"  # z in B, (x, y) in E (Cotton, from memory)


def test_d4d_and_s8_rotations_sit_in_the_highest_e():
    # Cotton App. IIA (from memory): D4d (x, y) in E1, (Rx, Ry) in E3; S8 (Rx, Ry) in E3
    assert str(point_group("D4d").vector) == "B2 + E1"
    assert str(point_group("D4d").axial) == "A2 + E3"
    assert str(point_group("S8").axial) == "A + E3"


def test_improper_classes_with_odd_n_are_named_as_in_the_books():
    # Cotton App. IIA (from memory): D5h classes E 2C5 2C5^2 5C2 sigma_h 2S5 2S5^3 5sigma_v;
    # C3h classes E C3 C3^2 sigma_h S3 S3^5.  (S_n^k = sigma_h^k C_n^k, so S5^2 = C5^2.)
    assert {"2S5", "2S5^3"} <= {c.name for c in point_group("D5h").classes}
    assert {"S3", "S3^5"} <= {c.name for c in point_group("C3h").classes}


# ------------------------------------------------------------------ products and overtones


@pytest.mark.parametrize(
    ("group", "labels", "expected"),
    [
        # Cotton ch. 7 / WDC App. X (from memory)
        ("Td", ("T2", "T2"), "A1 + E + T1 + T2"),
        ("Oh", ("Eg", "Eg"), "A1g + A2g + Eg"),
        ("Oh", ("T1u", "T1u"), "A1g + Eg + T1g + T2g"),
        ("Ih", ("T1u", "T1u"), "Ag + T1g + Hg"),
        ("D4h", ("Eu", "Eu"), "A1g + A2g + B1g + B2g"),
        ("D3h", ("E'", "E'"), "A1' + A2' + E'"),
        ("D6h", ("E1u", "E1u"), "A1g + A2g + E2g"),
        ("C2v", ("B1", "B2"), "A2"),
        ("D2h", ("B1u", "B2u"), "B3g"),
    ],
)
def test_direct_products(group, labels, expected):
    assert str(point_group(group).product(*labels)) == expected


@pytest.mark.parametrize(
    ("group", "label", "expected"),
    [
        # WDC App. X, symmetric powers of degenerate species (from memory)
        ("Td", "T2", "A1 + E + T2"),
        ("Ih", "T1u", "Ag + Hg"),
        ("Oh", "T1u", "A1g + Eg + T2g"),
        ("C3v", "E", "A1 + E"),
        ("D4h", "Eu", "A1g + B1g + B2g"),
        ("Oh", "Eg", "A1g + Eg"),
    ],
)
def test_symmetric_squares(group, label, expected):
    assert str(point_group(group).symmetric_square(label)) == expected


def test_linear_overtone_and_product():
    # Herzberg (1945), overtones of degenerate vibrations of linear molecules (from memory):
    # 2 x Pi_u (bending overtone) = Sigma_g+ + Delta_g; Pi_u x Pi_u = Sigma_g+ + Sigma_g- + Delta_g
    d = linear_group("D∞h")
    assert str(d.symmetric_square("Πu")) == "Σg+ + Δg"
    assert str(d.product("Πu", "Πu")) == "Σg+ + Σg- + Δg"
    assert str(d.product("Πu", "Σu+")) == "Πg"
    assert str(d.raman) == "2Σg+ + Πg + Δg"  # polarisability: x^2+y^2, z^2 (Σg+), (xz, yz), (x^2-y^2, xy)
