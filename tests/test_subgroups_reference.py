"""Correlation tables (restriction of every species to a subgroup) against published tables.

Sources:

* WDC: E. B. Wilson, J. C. Decius and P. C. Cross, *Molecular Vibrations*, McGraw-Hill (1955),
  Appendix X, correlation tables of the species of a group and its subgroups.
* Herzberg: G. Herzberg, *Molecular Spectra and Molecular Structure II*, Van Nostrand (1945),
  Table 55 (correlation of species in groups and subgroups).
* Fateley: W. G. Fateley, F. R. Dollish, N. T. McDevitt and F. F. Bentley, *Infrared and Raman
  Selection Rules for Molecular and Lattice Vibrations: The Correlation Method*, Wiley (1972),
  correlation tables.

None of these books was open while the tables were typed: every entry is "from memory".
Where a subgroup sits in more than one inequivalent way, the embedding is picked by the
classes of the parent its operations come from, never by the subgroup's name alone.
"""

from __future__ import annotations

import pytest

from splitting.errors import SymmetryError
from splitting.groups import oriented, point_group
from splitting.groups.subgroups import embeddings, subgroup_classes, subgroup_lattice


def correlation(parent: str, sub: str, classes: tuple[str, ...] | None = None) -> dict[str, dict[str, int]]:
    """Correlation of the one embedding (or the one whose parent classes are ``classes``)."""
    embs = embeddings(parent, sub)
    if classes is None:
        assert len(embs) == 1, [e.parent_classes for e in embs]
        emb = embs[0]
    else:
        matching = [e for e in embs if set(e.parent_classes) == set(classes)]
        assert len(matching) == 1, [e.parent_classes for e in embs]
        emb = matching[0]
    return {label: rep.as_dict() for label, rep in emb.correlation()}


def parse(table: dict[str, str]) -> dict[str, dict[str, int]]:
    """``{"T2": "A1 + E"}`` -> ``{"T2": {"A1": 1, "E": 1}}``."""
    out = {}
    for label, text in table.items():
        counts: dict[str, int] = {}
        for part in text.split(" + "):
            digits = ""
            while part[0].isdigit():
                digits, part = digits + part[0], part[1:]
            counts[part] = int(digits or 1)
        out[label] = counts
    return out


# (parent, subgroup, number of inequivalent embeddings, conjugate copies, table)
# every table: WDC App. X / Herzberg Table 55 / Fateley (from memory)
SINGLE_EMBEDDING = [
    ("Td", "C3v", 4, {"A1": "A1", "A2": "A2", "E": "E", "T1": "A2 + E", "T2": "A1 + E"}),
    ("Td", "D2d", 3, {"A1": "A1", "A2": "B1", "E": "A1 + B1", "T1": "A2 + E", "T2": "B2 + E"}),
    ("Oh", "D4h", 3, {"A1g": "A1g", "A2g": "B1g", "Eg": "A1g + B1g", "T1g": "A2g + Eg", "T2g": "B2g + Eg",
                      "A1u": "A1u", "A2u": "B1u", "Eu": "A1u + B1u", "T1u": "A2u + Eu", "T2u": "B2u + Eu"}),
    ("Oh", "D3d", 4, {"A1g": "A1g", "A2g": "A2g", "Eg": "Eg", "T1g": "A2g + Eg", "T2g": "A1g + Eg",
                      "A1u": "A1u", "A2u": "A2u", "Eu": "Eu", "T1u": "A2u + Eu", "T2u": "A1u + Eu"}),
    ("Oh", "C4v", 3, {"A1g": "A1", "A2g": "B1", "Eg": "A1 + B1", "T1g": "A2 + E", "T2g": "B2 + E",
                      "A1u": "A2", "A2u": "B2", "Eu": "A2 + B2", "T1u": "A1 + E", "T2u": "B1 + E"}),
    ("Oh", "Td", 1, {"A1g": "A1", "A2g": "A2", "Eg": "E", "T1g": "T1", "T2g": "T2",
                     "A1u": "A2", "A2u": "A1", "Eu": "E", "T1u": "T2", "T2u": "T1"}),
    ("Ih", "Th", 5, {"Ag": "Ag", "T1g": "Tg", "T2g": "Tg", "Gg": "Ag + Tg", "Hg": "Eg + Tg",
                     "Au": "Au", "T1u": "Tu", "T2u": "Tu", "Gu": "Au + Tu", "Hu": "Eu + Tu"}),
    ("Ih", "D5d", 6, {"Ag": "A1g", "T1g": "A2g + E1g", "T2g": "A2g + E2g", "Gg": "E1g + E2g",
                      "Hg": "A1g + E1g + E2g", "Au": "A1u", "T1u": "A2u + E1u", "T2u": "A2u + E2u",
                      "Gu": "E1u + E2u", "Hu": "A1u + E1u + E2u"}),
    ("Ih", "D3d", 10, {"Ag": "A1g", "T1g": "A2g + Eg", "T2g": "A2g + Eg", "Gg": "A1g + A2g + Eg",
                       "Hg": "A1g + 2Eg", "Au": "A1u", "T1u": "A2u + Eu", "T2u": "A2u + Eu",
                       "Gu": "A1u + A2u + Eu", "Hu": "A1u + 2Eu"}),
    ("Ih", "S6", 10, {"Ag": "Ag", "T1g": "Ag + Eg", "T2g": "Ag + Eg", "Gg": "2Ag + Eg", "Hg": "Ag + 2Eg",
                      "Au": "Au", "T1u": "Au + Eu", "T2u": "Au + Eu", "Gu": "2Au + Eu", "Hu": "Au + 2Eu"}),
    ("Ih", "C2h", 15, {"Ag": "Ag", "T1g": "Ag + 2Bg", "T2g": "Ag + 2Bg", "Gg": "2Ag + 2Bg", "Hg": "3Ag + 2Bg",
                       "Au": "Au", "T1u": "Au + 2Bu", "T2u": "Au + 2Bu", "Gu": "2Au + 2Bu", "Hu": "3Au + 2Bu"}),
]  # fmt: skip


@pytest.mark.parametrize(
    ("parent", "sub", "copies", "table"),
    SINGLE_EMBEDDING,
    ids=[f"{p}-{s}" for p, s, _, _ in SINGLE_EMBEDDING],
)
def test_textbook_correlations(parent, sub, copies, table):
    assert correlation(parent, sub) == parse(table)
    # number of conjugate copies = number of equivalent axes (e.g. 6 five-fold axes of Ih): common practice
    assert embeddings(parent, sub)[0].conjugates == copies


def test_oh_to_c2v_has_three_embeddings_and_the_table_one():
    embs = embeddings("Oh", "C2v")
    # C2 along a four-fold axis with two sigma_h, or with two sigma_d; C2 along a C2' with sigma_h and
    # sigma_d: three classes of C2v subgroups of Oh (common practice; follows from the subgroup lattice)
    assert len(embs) == 3
    assert sorted(e.parent_classes for e in embs) == sorted(
        [("E", "C2", "σh"), ("E", "C2", "σd"), ("E", "C2'", "σh", "σd")]
    )
    # the C2v column of the Oh correlation table, C2 = C4^2 with the sigma_d planes
    # (WDC App. X / Herzberg Table 55, from memory)
    assert correlation("Oh", "C2v", ("E", "C2", "σd")) == parse(
        {"A1g": "A1", "A2g": "A2", "Eg": "A1 + A2", "T1g": "A2 + B1 + B2", "T2g": "A1 + B1 + B2",
         "A1u": "A2", "A2u": "A1", "Eu": "A1 + A2", "T1u": "A1 + B1 + B2", "T2u": "A2 + B1 + B2"}
    )  # fmt: skip


def test_oh_to_d2d_has_two_embeddings():
    # D2d in Oh: S4 along a four-fold axis with the C2' of D2d along the other four-fold axes (sigma_d
    # planes), or along face diagonals (sigma_h planes): common practice; follows from the lattice
    embs = embeddings("Oh", "D2d")
    assert len(embs) == 2
    # the usual table column: C2' of D2d along x and y (WDC App. X, from memory)
    assert correlation("Oh", "D2d", ("E", "C2", "S4", "σd")) == parse(
        {"A1g": "A1", "A2g": "B1", "Eg": "A1 + B1", "T1g": "A2 + E", "T2g": "B2 + E",
         "A1u": "B1", "A2u": "A1", "Eu": "A1 + B1", "T1u": "B2 + E", "T2u": "A2 + E"}
    )  # fmt: skip


def test_d4h_to_c2v_through_sigma_v_and_through_sigma_d():
    # Fateley, D4h correlation table, columns C2v(sigma_v) and C2v(sigma_d) (from memory):
    # B1g -> A1 through sigma_v, B2g -> A1 through sigma_d
    embs = embeddings("D4h", "C2v")
    # four classes: C2(z) with 2sigma_v, C2(z) with 2sigma_d, C2' with sigma_h and sigma_v,
    # C2'' with sigma_h and sigma_d (common practice; follows from the subgroup lattice)
    assert len(embs) == 4
    via_v = correlation("D4h", "C2v", ("E", "C2", "σv"))
    via_d = correlation("D4h", "C2v", ("E", "C2", "σd"))
    assert via_v["B1g"] == {"A1": 1} and via_v["B2g"] == {"A2": 1}
    assert via_d["B2g"] == {"A1": 1} and via_d["B1g"] == {"A2": 1}
    for table in (via_v, via_d):
        assert table["A1g"] == {"A1": 1}
        assert table["A2u"] == {"A1": 1}  # z stays z
        assert table["Eu"] == {"B1": 1, "B2": 1}
        assert table["Eg"] == {"B1": 1, "B2": 1}


def test_d6h_to_d3h_two_embeddings_swap_b1_and_b2():
    # D3h in D6h keeps either the C2' (with the σv) or the C2'' axes (with the σd): two embeddings
    # (common practice).  Keeping C2' (WDC App. X, from memory; e.g. benzene -> 1,3,5-C6H3X3 with the
    # C2' axes through the atoms): B1u -> A1', B2u -> A2', B1g -> A1'', B2g -> A2''; keeping C2''
    # swaps the subscripts 1 and 2 of the B species' images.
    assert len(embeddings("D6h", "D3h")) == 2
    via_c2p = correlation("D6h", "D3h", ("E", "C3", "C2'", "S3", "σh", "σv"))
    via_c2pp = correlation("D6h", "D3h", ("E", "C3", "C2''", "S3", "σh", "σd"))
    common = parse({"A1g": "A1'", "A2g": "A2'", "E1g": "E''", "E2g": "E'",
                    "A1u": "A1''", "A2u": "A2''", "E1u": "E'", "E2u": "E''"})  # fmt: skip
    for table in (via_c2p, via_c2pp):
        assert {k: v for k, v in table.items() if k in common} == common
    assert via_c2p["B1u"] == {"A1'": 1} and via_c2p["B2u"] == {"A2'": 1}
    assert via_c2p["B1g"] == {"A1''": 1} and via_c2p["B2g"] == {"A2''": 1}
    assert via_c2pp["B2u"] == {"A1'": 1} and via_c2pp["B1u"] == {"A2'": 1}
    assert via_c2pp["B2g"] == {"A1''": 1} and via_c2pp["B1g"] == {"A2''": 1}


def test_subgroup_counts_of_small_groups():
    # group theory facts (from memory): S4 (= Td = O) has 30 subgroups in 11 conjugacy classes;
    # A4 (= T) 10 in 5; A5 (= I) 59 in 9; Oh has 98 subgroups; D2h (= C2^3) 16 subgroups, all normal
    assert (len(subgroup_lattice("Td")), len(subgroup_classes("Td"))) == (30, 11)
    assert (len(subgroup_lattice("O")), len(subgroup_classes("O"))) == (30, 11)
    assert (len(subgroup_lattice("T")), len(subgroup_classes("T"))) == (10, 5)
    assert (len(subgroup_lattice("I")), len(subgroup_classes("I"))) == (59, 9)
    assert len(subgroup_lattice("Oh")) == 98
    assert (len(subgroup_lattice("D2h")), len(subgroup_classes("D2h"))) == (16, 16)


@pytest.mark.parametrize("parent", ["D4h", "Oh", "Td", "D6h", "D3d", "C6v", "D2d", "S8"])
def test_every_embedding_keeps_dimensions_and_restricts_vector_to_vector(parent):
    g = point_group(parent)
    for emb in embeddings(parent):
        sub = emb.subgroup.group
        assert g.order % sub.order == 0  # Lagrange
        # conjugate copies = [G : N(H)], which divides [G : H] since H lies in its normaliser
        assert (g.order // sub.order) % emb.conjugates == 0
        table = dict(emb.correlation())
        for s in g.species:
            assert table[s.label].dimension == s.dimension
        # traces do not depend on the frame: the vector (axial) representation restricts to the
        # vector (axial) representation of the subgroup in its own frame
        parent_og = oriented(parent)
        assert parent_og.restrict(g.vector, emb.subgroup) == sub.vector
        assert parent_og.restrict(g.axial, emb.subgroup) == sub.axial
        assert len(emb.members) == sub.order


def test_embeddings_reject_a_group_that_is_not_a_subgroup():
    with pytest.raises(SymmetryError):
        embeddings("D4h", "C3v")


def test_axis_relation_and_to_dict():
    e = next(e for e in embeddings("Td", "C3v"))
    rel = e.axis_relation()
    assert rel["z"] in ("[1,1,1]", "[-1,-1,-1]", "[1,1,-1]", "[1,-1,1]", "[-1,1,1]",
                        "[-1,-1,1]", "[-1,1,-1]", "[1,-1,-1]")  # fmt: skip
    d = e.to_dict()
    assert d["parent"] == "Td" and d["subgroup"] == "C3v" and d["conjugate_copies"] == 4
    assert {row["species"] for row in d["correlation"]} == set(point_group("Td").labels)
