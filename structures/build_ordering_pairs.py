"""Write the ammonium bromide phase files used for a second orientational-ordering transition.

Run from the repository root::

    .venv/bin/python structures/build_ordering_pairs.py          # write the files
    .venv/bin/python structures/build_ordering_pairs.py --check  # rebuild in memory, compare, write nothing

Three phases of NH4Br (H. A. Levy and S. W. Peterson, J. Am. Chem. Soc. 75, 1536 (1953),
neutron diffraction of the phases of ND4Br/NH4Br; from memory):

* phase II (room temperature): CsCl type, Pm-3m, NH4+ in two orientations (H on 8g, occupancy 1/2);
* phase III (below about 235 K, from memory): tetragonal P4/nmm, cell sqrt(2) a x sqrt(2) a x a,
  Z = 2, neighbouring NH4+ in a (001) layer antiparallel, parallel along c; N on 2a (-4m2);
* phase IV (below about 80 K, from memory): P-43m, all NH4+ parallel (as in ordered NH4Cl).

The machinery (asymmetric-unit expansion with ``ase.spacegroup.crystal``, spglib checks of the
space group and of every Wyckoff letter, CIF text, read-back) is the one of
``structures/build_structures.py``; this script only adds the specifications and writes through
``splitting._io.atomic_write_text``.
"""

from __future__ import annotations

import argparse
import importlib.util
import math
import sys
from pathlib import Path

HERE = Path(__file__).resolve().parent
GENERATOR = "structures/build_ordering_pairs.py"


def _builder():
    """The module ``structures/build_structures.py`` (loaded once, registered for its dataclasses)."""
    if "build_structures" in sys.modules:
        return sys.modules["build_structures"]
    spec = importlib.util.spec_from_file_location("build_structures", HERE / "build_structures.py")
    module = importlib.util.module_from_spec(spec)
    sys.modules["build_structures"] = module
    spec.loader.exec_module(module)
    return module


b = _builder()

# Cubic cell of NH4Br phase II at room temperature, a = 4.06 A: from memory (common reference
# value, cf. Levy & Peterson 1953).  N-H = 1.03 A as for NH4Cl (from memory).  All three phases
# are given cells built from this one a (idealised): phase III as sqrt(2) a x sqrt(2) a x a, phase IV
# as a x a x a.  The real low-temperature cells are slightly smaller and phase III is slightly
# tetragonal; those numbers were not recalled and are not used.
NH4BR_A, NH4BR_NH = 4.06, 1.03

NH4BR_SOURCE = (
    "H. A. Levy and S. W. Peterson, J. Am. Chem. Soc. 75, 1536 (1953) (neutron diffraction of the "
    "phases of NH4Br / ND4Br); citation details from memory.",
    f"a = {NH4BR_A} A (phase II, room temperature) and N-H = {NH4BR_NH} A, from memory; every phase is "
    "built from this one a (idealised).",
)


def nh4br_specs() -> list:
    """Specifications of NH4Br phases II (disordered), III (antiparallel) and IV (parallel)."""
    a = NH4BR_A
    x = round(NH4BR_NH / (a * math.sqrt(3)), 6)  # H on (x, x, x) of the cubic cell
    disordered = b.CrystalSpec(
        filename="nh4br_disordered_Pm-3m.cif",
        name="ammonium bromide, phase II (orientationally disordered, CsCl type)",
        formula="Br H4 N",
        number=221,
        hm="P m -3 m",
        ops=b.ops_from_ase(221, 1),
        cellpar=(a,) * 3 + (90.0,) * 3,
        z=1,
        sites=(
            b.Site("N1", "N", (0.0, 0.0, 0.0), "1a"),
            b.Site("H1", "H", (x, x, x), "8g", 0.5),
            b.Site("Br1", "Br", (0.5, 0.5, 0.5), "1b"),
        ),
        centre=(0.0, 0.0, 0.0),
        centre_wyckoff="1a",
        centre_site_symmetry="m-3m",
        source=NH4BR_SOURCE,
        notes=("Two NH4+ orientations (related by the inversion); H on 8g (x,x,x) with occupancy 0.5.",),
    )
    # Phase III, P4/nmm origin choice 1 (origin at -4m2, the setting spglib standardises to).
    # a' = a + b, b' = -a + b, c' = c of the cubic cell; a cubic H direction (1, 1, 1) becomes
    # (sqrt 2, 0, 1), so one NH4+ has H at (+-u, 0, w) and (0, +-u, -w): an S4 axis along c.
    at, ct = round(a * math.sqrt(2), 6), a
    u = round(NH4BR_NH * math.sqrt(2.0 / 3.0) / at, 6)
    w = round(NH4BR_NH / math.sqrt(3.0) / ct, 6)
    tetragonal = b.CrystalSpec(
        filename="nh4br_ordered_P4nmm.cif",
        name="ammonium bromide, phase III (antiparallel NH4+ order, tetragonal)",
        formula="Br H4 N",
        number=129,
        hm="P 4/n m m",
        ops=b.ops_from_ase(129, 1),
        cellpar=(at, at, ct, 90.0, 90.0, 90.0),
        z=2,
        sites=(
            b.Site("N1", "N", (0.0, 0.0, 0.0), "2a"),
            b.Site("H1", "H", (u, 0.0, w), "8i"),
            b.Site("Br1", "Br", (0.0, 0.5, 0.5), "2c"),
        ),
        centre=(0.0, 0.0, 0.0),
        centre_wyckoff="2a",
        centre_site_symmetry="-4m2",
        source=NH4BR_SOURCE,
        notes=(
            "Origin choice 1. Cell a' = a + b, b' = -a + b, c' = c of the cubic cell (sqrt 2 x sqrt 2 x 1, idealised "
            "with the phase II a). N on 2a (-4m2); H on 8i (x,0,z); the two NH4+ of the cell are related by the "
            "inversion centre, so neighbours in the (001) layer are antiparallel and neighbours along c parallel.",
            "Br on 2c (0,1/2,z) is left at z = 1/2 (idealised); in the refined structure Br is displaced along c "
            "(allowed by P4/nmm, value not recalled).",
        ),
    )
    parallel = b.CrystalSpec(
        filename="nh4br_ordered_P-43m.cif",
        name="ammonium bromide, phase IV (parallel NH4+ order)",
        formula="Br H4 N",
        number=215,
        hm="P -4 3 m",
        ops=b.ops_from_ase(215, 1),
        cellpar=(a,) * 3 + (90.0,) * 3,
        z=1,
        sites=(
            b.Site("N1", "N", (0.0, 0.0, 0.0), "1a"),
            b.Site("H1", "H", (x, x, x), "4e"),
            b.Site("Br1", "Br", (0.5, 0.5, 0.5), "1b"),
        ),
        centre=(0.0, 0.0, 0.0),
        centre_wyckoff="1a",
        centre_site_symmetry="-43m",
        source=NH4BR_SOURCE,
        notes=("All NH4+ parallel; N on 1a, H on 4e (x,x,x), Br on 1b (idealised with the phase II a).",),
    )
    return [disordered, tetragonal, parallel]


def cif_text(spec) -> str:
    """CIF text of one specification, with this script named as the generator."""
    text = b.cif_text(spec)
    return text.replace(f"Generated by {b.GENERATOR}", f"Generated by {GENERATOR}")


def build_all(outdir: Path = HERE, *, write: bool = True) -> dict[str, str]:
    """Build and check every file; return ``{file name: text}``; write when asked."""
    from splitting._io import atomic_write_text

    texts, built = {}, {}
    for spec in nh4br_specs():
        atoms = b.build_atoms(spec)
        b.check_crystal(spec, atoms)  # raises RuntimeError on a wrong group or Wyckoff letter
        texts[spec.filename] = cif_text(spec)
        built[spec.filename] = atoms
    if write:
        for name, text in texts.items():
            atomic_write_text(outdir / name, text)
        for name, atoms in built.items():
            if not b._same_structure(atoms, b.read_quietly(outdir / name)):
                raise RuntimeError(f"{name}: ase.io.read gives a different structure")
    return texts


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--check", action="store_true", help="build and check, and compare with the files on disk")
    args = parser.parse_args(argv)
    texts = build_all(write=not args.check)
    if args.check:
        stale = [n for n, t in texts.items() if not (HERE / n).exists() or (HERE / n).read_text() != t]
        if stale:
            sys.stderr.write("out of date: " + ", ".join(stale) + "\n")
            return 1
    return 0


if __name__ == "__main__":
    sys.path.insert(0, str(HERE.parent))
    raise SystemExit(main())
