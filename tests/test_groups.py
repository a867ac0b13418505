"""Invariants of every point group the engine builds (no reference data needed).

Each finite group is checked the way a computer-algebra character-table test would be:
closure of the operations, the multiplication table, the conjugacy classes, the row and
column orthogonality of the irreducible characters, the sum of squared dimensions, the
number of irreps against the number of classes, unique Mulliken labels, and the vector,
axial and polarisability representations against traces of the matrices.  These are
theorems of finite group theory (e.g. F. A. Cotton, *Chemical Applications of Group
Theory*, 3rd ed., 1990, ch. 4, "the great orthogonality theorem and its consequences").
"""

from __future__ import annotations

import re

import numpy as np
import pytest

from splitting.errors import BookkeepingError, SymmetryError
from splitting.groups import (
    CRYSTALLOGRAPHIC,
    all_group_names,
    canonical_name,
    linear_group,
    point_group,
)

ALL = all_group_names()
TOL = 1e-8


def _keys(mats: np.ndarray) -> list[bytes]:
    return [np.round(m * 1e6).astype(np.int64).tobytes() for m in np.asarray(mats)]


def _identity_class(g) -> int:
    return int(g.class_of[0])


# ------------------------------------------------------------------ catalogue


def test_catalogue_holds_the_expected_families():
    # 3 + 6 axial families x 7 orders + 7 S2n + 7 cubic/icosahedral groups
    assert len(ALL) == len(set(ALL)) == 3 + 6 * 7 + 7 + 7
    for name in ("C1", "Ci", "Cs", "C2v", "D4h", "D5d", "S4", "S6", "T", "Th", "Td", "O", "Oh", "I", "Ih"):
        assert name in ALL


def test_the_32_crystallographic_groups_are_built():
    # 32 crystal classes: International Tables for Crystallography, Vol. A, Table 10.1.2.2 (from memory)
    assert len(CRYSTALLOGRAPHIC) == 32
    for name in CRYSTALLOGRAPHIC:
        assert name in ALL
        assert point_group(name).hermann_mauguin is not None


# ------------------------------------------------------------------ operations


@pytest.mark.parametrize("name", ALL)
def test_operations_are_orthogonal_distinct_and_identity_first(name):
    g = point_group(name)
    ops = g.operations
    assert ops.shape == (g.order, 3, 3)
    assert np.allclose(np.einsum("nij,nkj->nik", ops, ops), np.eye(3), atol=TOL)
    assert np.allclose(np.abs(np.linalg.det(ops)), 1.0, atol=TOL)
    assert np.allclose(ops[0], np.eye(3), atol=TOL)
    assert len(set(_keys(ops))) == g.order


@pytest.mark.parametrize("name", ALL)
def test_operations_are_closed_under_multiplication(name):
    g = point_group(name)
    ops = g.operations
    known = set(_keys(ops))
    products = np.einsum("aij,bjk->abik", ops, ops).reshape(-1, 3, 3)
    assert set(_keys(products)) <= known
    # and the stored table says which product is which
    assert np.allclose(ops[g.table], np.einsum("aij,bjk->abik", ops, ops), atol=TOL)


@pytest.mark.parametrize("name", ALL)
def test_multiplication_table_is_a_latin_square(name):
    g = point_group(name)
    n = g.order
    for row in g.table:
        assert sorted(row.tolist()) == list(range(n))
    for col in g.table.T:
        assert sorted(col.tolist()) == list(range(n))


# ------------------------------------------------------------------ classes


@pytest.mark.parametrize("name", ALL)
def test_classes_partition_the_group_and_are_conjugacy_classes(name):
    g = point_group(name)
    members = sorted(m for c in g.classes for m in c.members)
    assert members == list(range(g.order))
    assert g.classes[0].members == (0,)  # the identity alone first
    ops = g.operations
    for k, cls in enumerate(g.classes):
        assert all(g.class_of[m] == k for m in cls.members)
        rep = ops[cls.members[0]]
        conj = np.einsum("hij,jk,hlk->hil", ops, rep, ops)  # h rep h^-1 (h^-1 = h^T)
        assert set(_keys(conj)) == set(_keys(ops[list(cls.members)]))
    assert int(np.sum(g.class_sizes)) == g.order
    assert all(g.order % int(s) == 0 for s in g.class_sizes)  # class sizes divide the order


@pytest.mark.parametrize("name", ALL)
def test_class_names_carry_their_sizes(name):
    g = point_group(name)
    names = [c.name for c in g.classes]
    assert len(set(names)) == len(names)
    for c in g.classes:
        m = re.match(r"^(\d*)(.+)$", c.name)
        count = int(m.group(1)) if m.group(1) else 1
        assert count == c.size, c.name


# ------------------------------------------------------------------ characters


@pytest.mark.parametrize("name", ALL)
def test_number_of_irreps_equals_number_of_classes(name):
    g = point_group(name)
    assert g.irreps.shape == (len(g.classes), len(g.classes))


@pytest.mark.parametrize("name", ALL)
def test_sum_of_squared_dimensions_is_the_order(name):
    g = point_group(name)
    dims = g.irreps[:, _identity_class(g)]
    assert np.allclose(dims.imag, 0)
    assert np.allclose(dims.real, np.round(dims.real))
    assert round(float(np.sum(dims.real**2))) == g.order


@pytest.mark.parametrize("name", ALL)
def test_row_orthogonality(name):
    g = point_group(name)
    chi = g.irreps
    gram = (chi * g.class_sizes) @ chi.conj().T / g.order
    assert np.allclose(gram, np.eye(len(chi)), atol=1e-9)


@pytest.mark.parametrize("name", ALL)
def test_column_orthogonality(name):
    g = point_group(name)
    chi = g.irreps
    gram = chi.conj().T @ chi
    expected = np.diag(g.order / g.class_sizes.astype(float))
    assert np.allclose(gram, expected, atol=1e-9)


@pytest.mark.parametrize("name", ALL)
def test_species_merge_irreps_into_real_characters(name):
    g = point_group(name)
    seen: list[int] = []
    for s in g.species:
        rows = g.irreps[list(s.irreps)]
        total = rows.sum(axis=0)
        assert np.allclose(total.imag, 0, atol=1e-9)
        assert np.allclose(total.real, s.characters, atol=1e-9)
        assert s.dimension == round(s.characters[_identity_class(g)])
        if len(s.irreps) == 2:  # a complex-conjugate pair of one-dimensional irreps
            assert np.allclose(rows[0], rows[1].conj(), atol=1e-9)
            assert np.max(np.abs(rows[0].imag)) > 1e-6
            assert s.dimension == 2 and s.separably_degenerate
        else:
            assert np.allclose(rows[0].imag, 0, atol=1e-9)
        seen += list(s.irreps)
        # a real species is orthogonal to itself with norm = number of irreps it holds
        chi = np.array(s.characters)
        assert np.isclose(np.sum(g.class_sizes * chi * chi) / g.order, len(s.irreps))
    assert sorted(seen) == list(range(len(g.irreps)))


@pytest.mark.parametrize("name", ALL)
def test_labels_unique_and_mulliken_letters_match_dimensions(name):
    g = point_group(name)
    assert len(set(g.labels)) == len(g.labels)
    letters = {1: "AB", 2: "E", 3: "T", 4: "G", 5: "H"}  # Mulliken, J. Chem. Phys. 23, 1997 (1955) (from memory)
    for s in g.species:
        assert s.label[0] in letters[s.dimension], s.label
    # the totally symmetric species comes first
    first = g.species[0]
    assert np.allclose(first.characters, 1.0)
    assert first.label in ("A", "A1", "Ag", "A1g", "A'", "A1'")


@pytest.mark.parametrize("name", ALL)
def test_g_u_and_prime_suffixes_follow_inversion_and_sigma_h(name):
    g = point_group(name)
    inv = g.index_of(-np.eye(3)) if g.centrosymmetric else None
    for s in g.species:
        if inv is not None:
            chi_i = s.characters[g.class_of[inv]]
            assert s.label.endswith("g" if chi_i > 0 else "u"), s.label
            assert abs(abs(chi_i) - s.dimension) < 1e-9
        else:
            assert not s.label.endswith(("g", "u")), s.label


# ------------------------------------------------------------------ vector, axial, polarisability


@pytest.mark.parametrize("name", ALL)
def test_vector_and_axial_representations(name):
    g = point_group(name)
    assert g.vector.dimension == 3
    assert g.axial.dimension == 3
    reps = [g.operations[c.members[0]] for c in g.classes]
    trace = np.array([np.trace(r) for r in reps])
    det = np.array([np.linalg.det(r) for r in reps])
    assert np.allclose(g.characters_of(g.vector), trace, atol=1e-9)
    assert np.allclose(g.characters_of(g.axial), det * trace, atol=1e-9)


@pytest.mark.parametrize("name", ALL)
def test_polarisability_is_the_symmetric_square_of_the_vector(name):
    g = point_group(name)
    assert g.raman.dimension == 6
    assert g.raman[g.labels[0]] >= 1  # the trace x^2 + y^2 + z^2 is always totally symmetric
    # character of Sym^2 V at R: (tr(R)^2 + tr(R^2)) / 2
    reps = [g.operations[c.members[0]] for c in g.classes]
    chi = np.array([(np.trace(r) ** 2 + np.trace(r @ r)) / 2 for r in reps])
    assert np.allclose(g.characters_of(g.raman), chi, atol=1e-9)


# ------------------------------------------------------------------ reduction, products


@pytest.mark.parametrize("name", ALL)
def test_regular_representation_holds_every_irrep_dimension_times(name):
    g = point_group(name)
    chi = np.zeros(g.order)
    chi[0] = g.order  # the regular representation: |G| at E, 0 elsewhere
    rep = g.reduce_operations(chi)
    for s in g.species:
        expected = 1 if s.separably_degenerate else s.dimension
        assert rep[s.label] == expected
    assert rep.dimension == g.order


@pytest.mark.parametrize("name", ALL)
def test_products_with_the_totally_symmetric_species_and_self_products(name):
    g = point_group(name)
    a1 = g.labels[0]
    for s in g.species:
        assert g.product(a1, s.label).as_dict() == {s.label: 1}
        square = g.product(s.label, s.label)
        assert square.dimension == s.dimension**2
        # a real species contains the totally symmetric species in its square once per irrep it holds
        assert square[a1] == len(s.irreps)
        sym = g.symmetric_square(s.label)
        assert sym.dimension == s.dimension * (s.dimension + 1) // 2
        assert sym[a1] >= 1


def test_reduce_rejects_characters_that_are_not_a_representation():
    g = point_group("C2v")
    with pytest.raises(BookkeepingError):
        g.reduce(np.array([1.0, 0.5, 0.0, 0.0]))
    with pytest.raises(BookkeepingError):
        g.reduce_operations(np.arange(4.0) + 0.5)


def test_reduce_operations_rejects_a_function_that_is_not_constant_on_classes():
    g = point_group("C3v")
    chi = np.zeros(g.order)
    chi[0] = 6
    chi[1] = 1.0  # one C3 but not the other
    with pytest.raises(BookkeepingError):
        g.reduce_operations(chi)


# ------------------------------------------------------------------ Representation


def test_representation_arithmetic_and_text():
    g = point_group("D4h")
    a = g.representation({"A1g": 2, "Eu": 1})
    b = g.representation({"Eu": 1})
    assert str(a) == "2A1g + Eu"
    assert a.dimension == 4 and a.multiplicity == 3
    assert a.as_dict() == {"A1g": 2, "Eu": 1}
    assert str(a - b) == "2A1g"
    assert str(a + b) == "2A1g + 2Eu"
    assert str(2 * b) == "2Eu"
    assert str(b - b) == "0"
    assert a.labels == ("A1g", "Eu")
    assert dict(iter(a)) == {"A1g": 2, "Eu": 1}
    d = a.to_dict()
    assert d["group"] == "D4h" and d["text"] == "2A1g + Eu"
    with pytest.raises(BookkeepingError):
        b - a
    with pytest.raises(BookkeepingError):
        a + point_group("C2v").vector
    with pytest.raises(KeyError):
        g.representation({"T1u": 1})
    with pytest.raises(KeyError):
        a["A1"]


# ------------------------------------------------------------------ names


@pytest.mark.parametrize(
    ("spelling", "canon"),
    [
        # aliases and Hermann-Mauguin symbols: International Tables for Crystallography, Vol. A,
        # Table 10.1.2.2 (from memory); C3i = S6, S2 = Ci, C1h = Cs: common practice
        ("C3i", "S6"),
        ("S2", "Ci"),
        ("C1h", "Cs"),
        ("4/mmm", "D4h"),
        ("m-3m", "Oh"),
        ("-43m", "Td"),
        ("-6m2", "D3h"),
        ("mm2", "C2v"),
        ("2/m", "C2h"),
        ("-3m", "D3d"),
        ("d2h", "D2h"),
        ("Dinfh", "D∞h"),
        ("C*v", "C∞v"),
        ("S3", "C3h"),
        ("S5", "C5h"),
    ],
)
def test_canonical_names(spelling, canon):
    assert canonical_name(spelling) == canon


def test_point_group_accepts_aliases_and_rejects_unknown_names():
    assert point_group("4/mmm") is point_group("D4h")
    with pytest.raises(SymmetryError):
        point_group("Q7")
    with pytest.raises(SymmetryError):
        point_group("C9v")  # beyond the largest axial order the engine builds
    with pytest.raises(SymmetryError):
        point_group("D∞h")  # linear groups have their own constructor


def test_crystallographic_hermann_mauguin_symbols_round_trip():
    for name in CRYSTALLOGRAPHIC:
        g = point_group(name)
        assert canonical_name(g.hermann_mauguin) == name


def test_to_dict_is_plain():
    import json

    d = point_group("Oh").to_dict()
    text = json.dumps(d)
    assert json.loads(text)["order"] == 48
    assert [s["label"] for s in d["species"]] == list(point_group("Oh").labels)


# ------------------------------------------------------------------ linear groups


def test_linear_groups_vector_axial_and_labels():
    # Herzberg, Molecular Spectra and Molecular Structure II (1945), Table 20 (from memory)
    d = linear_group("D∞h")
    c = linear_group("C∞v")
    assert str(d.vector) == "Σu+ + Πu"
    assert str(d.axial) == "Σg- + Πg"
    assert str(c.vector) == "Σ+ + Π"
    assert str(c.axial) == "Σ- + Π"
    assert d.get_species("Pi_u").label == "Πu"
    assert d.get_species("Sigma_g+").label == "Σg+"
    assert linear_group("Dinfh").name == "D∞h"
    with pytest.raises(SymmetryError):
        linear_group("D4h")


def test_linear_group_characters_are_those_of_angular_momentum():
    from splitting.groups.operations import rotation

    d = linear_group("D∞h")
    for phi in (0.3, 1.0, 2.5):
        r = rotation([0, 0, 1], phi)
        assert np.isclose(d.character("Πu", r), 2 * np.cos(phi))
        assert np.isclose(d.character("Δg", r), 2 * np.cos(2 * phi))
        assert np.isclose(d.character("Πu", -r), -2 * np.cos(phi))
