"""Tests of the free-unit mode catalogue: format, loader errors and table invariants."""

from __future__ import annotations

import json
import re
from pathlib import Path

import pytest

from splitting.errors import DataError, InputError
from splitting.spectra import catalogue
from splitting.spectra.catalogue import (
    FreeMode,
    ModeTable,
    atom_count,
    bundled_tables,
    find_table,
    formula_counts,
    load_mode_table,
    normalise_point_group,
    normalise_species,
    species_dimension,
)

UNITS = Path(catalogue.__file__).resolve().parents[1] / "data" / "units"
UNIT_FILES = sorted(UNITS.glob("*.toml"))
TABLES = bundled_tables()

SPECIES_ALPHABET = re.compile(r"^(?:[ABETGH][1-3]?[gu]?(?:'{1,2})?|Σ[gu]?[+-]|[ΠΔΦ][gu]?)$")

MINIMAL = """
name = "test unit"
formula = "CO3"
charge = -2
point_group = "D3h"
phase = "invented"
source = "invented for a test"

[[mode]]
name = "nu1"
species = "A1'"
wavenumber = 1000
"""


def write(tmp_path: Path, text: str, name: str = "unit.toml") -> Path:
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


# ----------------------------------------------------------------- bundled tables


def test_bundled_files_exist() -> None:
    assert len(UNIT_FILES) >= 11
    assert len(TABLES) == len(UNIT_FILES)


@pytest.mark.parametrize("path", UNIT_FILES, ids=lambda p: p.stem)
def test_every_bundled_file_loads(path: Path) -> None:
    table = load_mode_table(path)
    assert isinstance(table, ModeTable)
    assert table.path == str(path)
    assert TABLES[table.name].modes == table.modes


@pytest.mark.parametrize("path", UNIT_FILES, ids=lambda p: p.stem)
def test_every_bundled_file_states_its_source_in_a_header_comment(path: Path) -> None:
    head = path.read_text(encoding="utf-8").split("\nname", 1)[0]
    assert head.startswith("#")
    assert "source" in head.lower()


@pytest.mark.parametrize("name", sorted(TABLES))
def test_species_labels_use_the_allowed_alphabet(name: str) -> None:
    for mode in TABLES[name].modes:
        assert SPECIES_ALPHABET.match(mode.species), (name, mode.species)
        assert "F" not in mode.species


@pytest.mark.parametrize("name", sorted(TABLES))
def test_degeneracies_add_up_to_3n_minus_6(name: str) -> None:
    table = TABLES[name]
    n = atom_count(table.formula)
    expected = 3 * n - (5 if table.linear or n == 2 else 6)
    assert table.expected_degrees_of_freedom() == expected
    if table.complete:
        assert table.degrees_of_freedom() == expected
    else:
        assert table.degrees_of_freedom() < expected


@pytest.mark.parametrize("name", sorted(TABLES))
def test_wavenumbers_in_range(name: str) -> None:
    for mode in TABLES[name].modes:
        assert 10 <= mode.wavenumber_cm1 <= 4000, (name, mode.name)


@pytest.mark.parametrize("name", sorted(TABLES))
def test_every_table_names_a_source_and_phase(name: str) -> None:
    table = TABLES[name]
    assert len(table.source) > 20
    assert re.search(r"\(?(19|20)\d\d\)?", table.source)
    assert table.phase


@pytest.mark.parametrize("name", sorted(TABLES))
def test_bundled_values_say_how_they_were_obtained(name: str) -> None:
    # every bundled wavenumber was recalled rather than read, and must say so
    for mode in TABLES[name].modes:
        assert "from memory" in mode.note, (name, mode.name)


@pytest.mark.parametrize("name", sorted(TABLES))
def test_activity_flags_follow_mutual_exclusion(name: str) -> None:
    table = TABLES[name]
    centrosymmetric = table.point_group in {"D∞h", "Oh", "D6h", "Ih"}
    for mode in table.modes:
        assert mode.ir is not None and mode.raman is not None
        if centrosymmetric:
            assert not (mode.ir and mode.raman), (name, mode.name)
            if mode.species.endswith("g") or "g" in mode.species[1:]:
                assert not mode.ir


@pytest.mark.parametrize("name", sorted(TABLES))
def test_to_dict_is_json_ready(name: str) -> None:
    table = TABLES[name]
    text = json.dumps(table.to_dict(), ensure_ascii=False)
    back = json.loads(text)
    assert back["name"] == table.name
    assert len(back["modes"]) == len(table.modes)


def test_species_belong_to_their_point_group() -> None:
    groups = pytest.importorskip("splitting.groups")
    point_group = getattr(groups, "point_group", None)
    if point_group is None:
        pytest.skip("splitting.groups.point_group is not available yet")
    checked = 0
    for table in TABLES.values():
        if table.linear:
            continue
        labels = {s.label: s.dimension for s in point_group(table.point_group).species}
        for mode in table.modes:
            assert mode.species in labels, (table.name, mode.species, sorted(labels))
            assert labels[mode.species] == mode.dimension
            checked += 1
    assert checked > 0


def test_linear_species_belong_to_their_group() -> None:
    groups = pytest.importorskip("splitting.groups")
    linear_group = getattr(groups, "linear_group", None)
    if linear_group is None:
        pytest.skip("splitting.groups.linear_group is not available yet")
    for table in TABLES.values():
        if not table.linear:
            continue
        group = linear_group(table.point_group)
        labels = {s.label: s.dimension for s in group.species}
        for mode in table.modes:
            assert labels.get(mode.species) == mode.dimension, (table.name, mode.species)


# ----------------------------------------------------------------- lookup


@pytest.mark.parametrize(
    ("query", "name"),
    [
        ("carbonate", "carbonate"),
        ("CO3", "carbonate"),
        ("co3", "carbonate"),
        ("  Carbonate ", "carbonate"),
        ("C60", "C60"),
        ("c60", "C60"),
        ("benzene", "benzene"),
        ("C6H6", "benzene"),
        ("SF6", "sulfur hexafluoride"),
        ("ClO4", "perchlorate"),
        ("nh4", "ammonium"),
        ("N2", "nitrogen"),
        ("CO2", "carbon dioxide"),
    ],
)
def test_find_table(query: str, name: str) -> None:
    assert find_table(query).name == name


def test_find_table_unknown_lists_what_exists() -> None:
    with pytest.raises(DataError) as info:
        find_table("unobtainium")
    message = str(info.value)
    assert "unobtainium" in message and "carbonate (CO3)" in message and "C60" in message
    assert "\n" not in message


def test_mode_lookup() -> None:
    table = find_table("sulfate")
    assert table.mode("NU3").species == "T2"
    with pytest.raises(DataError, match="nu9"):
        table.mode("nu9")


# ----------------------------------------------------------------- labels and formulae


@pytest.mark.parametrize(
    ("alias", "canonical"),
    [
        ("Sigma_g+", "Σg+"),
        ("Sigma_u+", "Σu+"),
        ("Pi_u", "Πu"),
        ("Pi_g", "Πg"),
        ("Sigma+_g", "Σg+"),
        ("sigma_u-", "Σu-"),
        ("Delta_g", "Δg"),
        ("Σg+", "Σg+"),
        ("A1'", "A1'"),
        ("A2''", "A2''"),
        ("T1u", "T1u"),
        ("Hg", "Hg"),
        ("E", "E"),
    ],
)
def test_normalise_species(alias: str, canonical: str) -> None:
    assert normalise_species(alias) == canonical


@pytest.mark.parametrize(
    ("bad", "hint"),
    [
        ("F2", "T2"),
        ("F1u", "T1u"),
        ("a1g", "A1g"),
        ("A1′", "A1'"),
        ("E″", "E''"),
        ("Pi_u+", "sign"),
        ("Q1", "Mulliken"),
    ],
)
def test_bad_species_are_explained(bad: str, hint: str) -> None:
    with pytest.raises(InputError) as info:
        normalise_species(bad)
    assert hint in str(info.value)


@pytest.mark.parametrize(
    ("label", "dim"), [("A1g", 1), ("B2u", 1), ("E'", 2), ("T2", 3), ("Gu", 4), ("Hg", 5), ("Σu+", 1), ("Πu", 2)]
)
def test_species_dimension(label: str, dim: int) -> None:
    assert species_dimension(label) == dim


@pytest.mark.parametrize(
    ("formula", "counts"),
    [
        ("CO3", {"C": 1, "O": 3}),
        ("ClO4", {"Cl": 1, "O": 4}),
        ("C6H6", {"C": 6, "H": 6}),
        ("N2", {"N": 2}),
        ("CH3CH3", {"C": 2, "H": 6}),
    ],
)
def test_formula_counts(formula: str, counts: dict[str, int]) -> None:
    assert formula_counts(formula) == counts


@pytest.mark.parametrize("bad", ["", "co3", "CO3(2-)", "C0", "12C"])
def test_formula_rejects_bad_text(bad: str) -> None:
    with pytest.raises(InputError):
        formula_counts(bad)


@pytest.mark.parametrize(
    ("alias", "canonical"), [("Dinfh", "D∞h"), ("D-inf-h", "D∞h"), ("Cinfv", "C∞v"), ("D3h", "D3h"), ("Ih", "Ih")]
)
def test_normalise_point_group(alias: str, canonical: str) -> None:
    assert normalise_point_group(alias) == canonical


def test_unknown_point_group_rejected() -> None:
    with pytest.raises(InputError, match="Schoenflies"):
        normalise_point_group("P21/c")


# ----------------------------------------------------------------- user files


def test_minimal_user_file(tmp_path: Path) -> None:
    table = load_mode_table(write(tmp_path, MINIMAL))
    assert table.complete is True
    assert table.modes == (FreeMode("nu1", "A1'", 1000.0),)
    assert table.degrees_of_freedom() == 1


def test_ascii_aliases_are_normalised_on_reading(tmp_path: Path) -> None:
    text = MINIMAL.replace('point_group = "D3h"', 'point_group = "Dinfh"').replace("A1'", "Sigma_g+")
    text = text.replace('formula = "CO3"', 'formula = "CO2"')
    table = load_mode_table(write(tmp_path, text))
    assert table.point_group == "D∞h" and table.linear
    assert table.modes[0].species == "Σg+"


def test_isotope_shifts_are_read(tmp_path: Path) -> None:
    text = MINIMAL + '[mode.isotope_shift]\n"13C" = -30\n"18O" = -5.5\n'
    table = load_mode_table(write(tmp_path, text))
    assert table.modes[0].isotope_shifts == {"13C": -30.0, "18O": -5.5}


@pytest.mark.parametrize(
    ("old", "new", "expected"),
    [
        ('name = "test unit"\n', "", "missing key name"),
        ('source = "invented for a test"\n', "", "missing key source"),
        ("wavenumber = 1000", 'wavenumber = "1000 cm-1"', "wavenumber must be a number"),
        ("wavenumber = 1000", "wavenumber = -3", "wavenumber must be positive"),
        ("wavenumber = 1000", "wavenumbr = 1000", "missing key wavenumber"),
        ("wavenumber = 1000", "wavenumber = 1000\nintensity = 3", "unknown key intensity"),
        ('phase = "invented"', 'phase = "invented"\ncolour = "red"', "unknown key colour"),
        ('species = "A1\'"', 'species = "F2"', "write 'T2'"),
        ("charge = -2", 'charge = "2-"', "charge must be an integer"),
        ('formula = "CO3"', 'formula = "CO3(2-)"', "formula"),
        ('point_group = "D3h"', 'point_group = "xyz"', "point group"),
        ("wavenumber = 1000", "wavenumber = 1000\nir = 1", "ir must be true or false"),
        ("[[mode]]", "complete = 0\n[[mode]]", "complete must be true or false"),
        ("wavenumber = 1000", 'wavenumber = 1000\n[mode.isotope_shift]\n"C13" = -3', "isotope 'C13'"),
        (
            "wavenumber = 1000",
            'wavenumber = 1000\n[[mode]]\nname = "NU1"\nspecies = "E\'"\nwavenumber = 5',
            "appears twice",
        ),
        ("wavenumber = 1000", "wavenumber = = 1000", "not valid TOML"),
    ],
)
def test_bad_files_raise_one_line_naming_the_file(tmp_path: Path, old: str, new: str, expected: str) -> None:
    assert old in MINIMAL
    path = write(tmp_path, MINIMAL.replace(old, new, 1))
    with pytest.raises(InputError) as info:
        load_mode_table(path)
    message = str(info.value)
    assert str(path) in message
    assert expected in message
    assert "\n" not in message


def test_missing_file(tmp_path: Path) -> None:
    with pytest.raises(InputError, match="no such file"):
        load_mode_table(tmp_path / "absent.toml")


def test_no_modes(tmp_path: Path) -> None:
    text = MINIMAL.split("[[mode]]")[0] + "mode = []\n"
    with pytest.raises(InputError, match="non-empty"):
        load_mode_table(write(tmp_path, text))
