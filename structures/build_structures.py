"""Regenerate every generated structure file bundled in ``structures/``.

Run from the repository root::

    .venv/bin/python structures/build_structures.py          # write all files
    .venv/bin/python structures/build_structures.py --check  # verify, write nothing

Every crystal is expanded from its asymmetric unit with :func:`ase.spacegroup.crystal`
and checked with spglib (``symprec=1e-3``): space-group number, the Wyckoff letter of
every site and of the molecule centres.  Every written file is read back with
:func:`ase.io.read` and compared atom by atom (same count, same order, same places).
Any failed check raises ``RuntimeError`` and nothing further is written.

Provenance of every number is stated in the header of each file and in
``structures/README.md``.  Values recalled without the source open are marked
"from memory"; geometry that was constructed rather than copied is marked "idealised".
"""

from __future__ import annotations

import argparse
import io
import math
import sys
import warnings
from dataclasses import dataclass, field
from fractions import Fraction
from pathlib import Path

import ase.io
import numpy as np
import spglib
from ase import Atoms
from ase.geometry import cellpar_to_cell
from ase.spacegroup import Spacegroup, crystal
from ase.spacegroup.spacegroup import spacegroup_from_data

HERE = Path(__file__).resolve().parent
GENERATOR = "structures/build_structures.py"
SYMPREC = 1e-3
PHI = (1.0 + math.sqrt(5.0)) / 2.0

# --------------------------------------------------------------------------------------
# Reference numbers (angstrom, degrees).  Each carries its source.
# --------------------------------------------------------------------------------------

# Calcite: cell of D. L. Graf, Am. Mineral. 46, 1283 (1961), from memory; O x from
# memory of the refinements of Maslen et al., Acta Cryst. B51, 929 (1995) and
# Effenberger et al., Z. Kristallogr. 156, 233 (1981) (x = 0.257..0.258).
CALCITE_A, CALCITE_C, CALCITE_OX = 4.9896, 17.0610, 0.2570

# Naphthalene cell, P2_1/a: Abrahams, Robertson & White, Acta Cryst. 2, 233 (1949) and
# D. W. J. Cruickshank, Acta Cryst. 10, 504 (1957); from memory.
NAPH_CELL_P21A = (8.235, 6.003, 8.658, 90.0, 122.92, 90.0)
# Bond lengths of naphthalene (from memory, rounded values of the X-ray/electron
# diffraction literature, e.g. Brock & Dunitz, Acta Cryst. B38, 2218 (1982)):
NAPH_C1C2, NAPH_C2C3, NAPH_C1C9, NAPH_C9C10 = 1.364, 1.415, 1.421, 1.418
NAPH_ANGLE_C1C9C10 = 119.2  # degrees, from memory
NAPH_CH = 1.08  # idealised C-H (common practice for neutron-like C-H)
# Three ring-carbon positions (fractional, P2_1/a) recalled from memory of
# Cruickshank (1957); used only to orient the idealised molecule (least squares).
NAPH_RECALLED = {"C2": (0.0856, 0.0186, 0.3251), "C1": (0.1148, 0.1588, 0.2200), "C9": (0.0472, 0.1025, 0.0351)}

# C60: W. I. F. David et al., Nature 353, 147 (1991): 6:6 and 6:5 bond lengths and the
# Pa-3 orientation (about 22 deg about [111], equivalently 98 deg); from memory.
C60_D66, C60_D65 = 1.391, 1.455
C60_A_PA3 = 14.04  # David et al. (1991), low temperature, from memory
C60_ROT_DEG = 22.0  # David et al. (1991), from memory; sense fixed in c60_pa3_rotation()
# Room-temperature fcc cell: P. A. Heiney et al., Phys. Rev. Lett. 66, 2911 (1991),
# from memory.
C60_A_FCC = 14.17

# Diamond: a = 3.567 A at room temperature (common reference value, e.g. CRC Handbook;
# from memory).
DIAMOND_A = 3.567

# NH4Cl: H. A. Levy and S. W. Peterson, Phys. Rev. 86, 766 (1952) (neutron diffraction
# of ND4Cl/NH4Cl); a and N-H from memory, both phases given the same a here (idealised).
NH4CL_A, NH4CL_NH = 3.87, 1.03

# alpha-N2: Pa-3 model; L. Vegard, Z. Phys. 58, 497 (1929); T. H. Jordan, H. W. Smith,
# W. E. Streib and W. N. Lipscomb, J. Chem. Phys. 41, 756 (1964); from memory.
N2_A, N2_BOND = 5.66, 1.10
# Solid CO2: A. Simon and K. Peters, Acta Cryst. B36, 2750 (1980); from memory.
CO2_A, CO2_BOND = 5.62, 1.16

# Free molecules (gas-phase equilibrium or average structures), all from memory:
H2O_OH, H2O_ANGLE = 0.9572, 104.52  # Benedict, Gailar & Plyler, J. Chem. Phys. 24, 1139 (1956)
NH3_NH, NH3_ANGLE = 1.012, 106.7  # Herzberg, Electronic Spectra ... Polyatomic Molecules (1966)
CH4_CH = 1.087  # CRC Handbook of Chemistry and Physics, "Structure of free molecules"
SF6_SF = 1.561  # CRC Handbook, "Structure of free molecules"
CO2_CO_FREE = 1.160  # CRC Handbook, "Structure of free molecules"
BENZENE_CC, BENZENE_CH = 1.397, 1.084  # Herzberg (1966) / CRC Handbook
# Ferrocene, gas-phase electron diffraction: A. Haaland and J. E. Nilsson,
# Acta Chem. Scand. 22, 2653 (1968); H kept in the ring plane (idealised).
FC_FEC, FC_CC, FC_CH = 2.064, 1.440, 1.104
# closo-B12H12(2-): J. A. Wunderlich and W. N. Lipscomb, J. Am. Chem. Soc. 82, 4427
# (1960) (K2B12H12); rounded, from memory.  Ideal Ih.
B12_BB, B12_BH = 1.78, 1.12


# --------------------------------------------------------------------------------------
# Small geometry helpers
# --------------------------------------------------------------------------------------


def rotation_about(axis: np.ndarray, angle_deg: float) -> np.ndarray:
    """Right-handed rotation matrix about ``axis`` by ``angle_deg`` (Rodrigues)."""
    u = np.asarray(axis, dtype=float)
    u = u / np.linalg.norm(u)
    t = math.radians(angle_deg)
    k = np.array([[0, -u[2], u[1]], [u[2], 0, -u[0]], [-u[1], u[0], 0]])
    return np.eye(3) + math.sin(t) * k + (1 - math.cos(t)) * (k @ k)


def icosahedron_vertices() -> np.ndarray:
    """Twelve vertices (0, +-1, +-phi) and cyclic permutations; two-folds along x, y, z."""
    out = []
    for s1 in (1, -1):
        for s2 in (1, -1):
            v = (0.0, s1 * 1.0, s2 * PHI)
            out += [v, (v[2], v[0], v[1]), (v[1], v[2], v[0])]
    return np.array(out)


def icosahedron_edges(v: np.ndarray) -> list[tuple[int, int]]:
    """Index pairs of the 30 edges (shortest vertex-vertex distances)."""
    d = np.linalg.norm(v[:, None] - v[None], axis=-1)
    edge = d[d > 1e-9].min()
    return [(i, j) for i in range(len(v)) for j in range(i + 1, len(v)) if abs(d[i, j] - edge) < 1e-6]


def c60_standard(d66: float = C60_D66, d65: float = C60_D65) -> np.ndarray:
    """Ih C60 (60 x 3, angstrom) centred at 0, two-fold axes along x, y, z.

    Built by truncating an icosahedron of edge ``L = d66 + 2 d65``: on every edge
    i-j an atom sits at ``V_i + t (V_j - V_i)`` with ``t = d65 / L``; the pentagon
    edges are then ``d65`` and the hexagon-hexagon edges ``d66``.  Atoms come out in
    the orientation of the textbook coordinates (0, +-1, +-3 phi) (cyclic), whose
    6:6 bond crossing the z axis is parallel to y.
    """
    v = icosahedron_vertices()
    edges = icosahedron_edges(v)
    edge_len = np.linalg.norm(v[edges[0][0]] - v[edges[0][1]])
    v = v * (d66 + 2 * d65) / edge_len
    t = d65 / (d66 + 2 * d65)
    atoms = []
    for i, j in edges:
        atoms.append(v[i] + t * (v[j] - v[i]))
        atoms.append(v[j] + t * (v[i] - v[j]))
    return np.array(atoms)


def c60_faces(pos: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Pentagon centres (12 x 3) and 6:6 bond midpoints (30 x 3) of a centred C60."""
    d = np.linalg.norm(pos[:, None] - pos[None], axis=-1)
    short = (d > 0.1) & (d < 0.5 * (C60_D66 + C60_D65))  # 6:6 bonds
    mids = np.array([(pos[i] + pos[j]) / 2 for i, j in zip(*np.nonzero(short), strict=True) if i < j])
    # each pentagon is the five atoms nearest to an icosahedron vertex direction
    pent = []
    for v in icosahedron_vertices():
        near = np.argsort(-(pos @ v))[:5]
        pent.append(pos[near].mean(axis=0))
    return np.array(pent), mids


def naphthalene_molecule() -> tuple[list[str], np.ndarray]:
    """Idealised D2h naphthalene, centred at 0, in the yz plane.

    Axes: z along the short in-plane axis (through the C9-C10 bond), y along the long
    axis, x perpendicular to the plane.  Atom order C1..C10 then H1..H8 (H on C1..C8).
    """
    h9 = NAPH_C9C10 / 2
    c9 = np.array([0.0, 0.0, h9])
    ang = math.radians(NAPH_ANGLE_C1C9C10)
    c1 = c9 + NAPH_C1C9 * np.array([0.0, math.sin(ang), -math.cos(ang)])
    z2 = NAPH_C2C3 / 2
    c2 = np.array([0.0, c1[1] + math.sqrt(NAPH_C1C2**2 - (c1[2] - z2) ** 2), z2])

    def mirror(p: np.ndarray, sy: int, sz: int) -> np.ndarray:
        return np.array([p[0], sy * p[1], sz * p[2]])

    # ring numbering: C1 C2 C3 C4 (ring 1, y > 0), C5 C6 C7 C8 (ring 2), C9 C10 bridge
    c = [
        c1,
        c2,
        mirror(c2, 1, -1),
        mirror(c1, 1, -1),
        mirror(c1, -1, -1),
        mirror(c2, -1, -1),
        mirror(c2, -1, 1),
        mirror(c1, -1, 1),
        c9,
        mirror(c9, 1, -1),
    ]
    # neighbours of C1..C8 for the external bisector
    nb = {0: (8, 1), 1: (0, 2), 2: (1, 3), 3: (2, 9), 4: (9, 5), 5: (4, 6), 6: (5, 7), 7: (6, 8)}
    h = []
    for i in range(8):
        a, b = nb[i]
        u = (c[i] - c[a]) / np.linalg.norm(c[i] - c[a]) + (c[i] - c[b]) / np.linalg.norm(c[i] - c[b])
        h.append(c[i] + NAPH_CH * u / np.linalg.norm(u))
    return ["C"] * 10 + ["H"] * 8, np.array(c + h)


# --------------------------------------------------------------------------------------
# Symmetry operations
# --------------------------------------------------------------------------------------


def _fmt_frac(t: float) -> str:
    f = Fraction(t).limit_denominator(24)
    if f == 0:
        return ""
    return f"+{f}" if f > 0 else f"-{-f}"


def op_to_xyz(rot: np.ndarray, trans: np.ndarray) -> str:
    """Format one operation as a CIF ``x,y,z`` string (e.g. ``-x+1/2,y,-z``)."""
    rows = []
    for r, t in zip(rot, trans, strict=True):
        s = ""
        for coeff, name in zip(r, "xyz", strict=True):
            c = int(np.rint(coeff))
            if c == 1:
                s += f"+{name}"
            elif c == -1:
                s += f"-{name}"
            elif c != 0:
                s += f"{c:+d}*{name}"
        s = s.lstrip("+") + _fmt_frac(float(t) % 1.0)
        rows.append(s)
    return ",".join(rows)


def xyz_to_op(text: str) -> tuple[np.ndarray, np.ndarray]:
    """Parse a CIF ``x,y,z`` string into (3x3 integer matrix, translation)."""
    rot = np.zeros((3, 3), dtype=int)
    trans = np.zeros(3)
    for i, part in enumerate(text.replace(" ", "").split(",")):
        part = part if part[0] in "+-" else "+" + part
        tokens, cur = [], ""
        for ch in part:
            if ch in "+-" and cur:
                tokens.append(cur)
                cur = ""
            cur += ch
        tokens.append(cur)
        for tok in tokens:
            sign = -1 if tok[0] == "-" else 1
            body = tok[1:]
            if body in ("x", "y", "z"):
                rot[i, "xyz".index(body)] += sign
            else:
                trans[i] += sign * float(Fraction(body))
    return rot, trans % 1.0


def ops_from_ase(number: int, setting: int = 1) -> tuple[str, ...]:
    """All operations (centring included) of an ase database setting, as xyz strings."""
    rots, trans = Spacegroup(number, setting).get_op()
    return tuple(op_to_xyz(r, t) for r, t in zip(rots, trans, strict=True))


P21A_OPS = ("x,y,z", "-x+1/2,y+1/2,-z", "-x,-y,-z", "x+1/2,-y+1/2,z")
P21C_OPS = ("x,y,z", "-x,y+1/2,-z+1/2", "-x,-y,-z", "x,-y+1/2,z+1/2")
P21N_OPS = ("x,y,z", "-x+1/2,y+1/2,-z+1/2", "-x,-y,-z", "x+1/2,-y+1/2,z+1/2")


def orbit(frac: np.ndarray, ops: tuple[str, ...]) -> np.ndarray:
    """Distinct images (mod 1) of one fractional point under ``ops``."""
    out: list[np.ndarray] = []
    for op in ops:
        r, t = xyz_to_op(op)
        p = (r @ frac + t) % 1.0
        if not any(_same_frac(p, q) for q in out):
            out.append(p)
    return np.array(out)


def _same_frac(p: np.ndarray, q: np.ndarray, tol: float = 1e-5) -> bool:
    d = (p - q + 0.5) % 1.0 - 0.5
    return bool(np.all(np.abs(d) < tol))


def asymmetric_unit(frac: np.ndarray, ops: tuple[str, ...]) -> list[int]:
    """Indices of one representative per orbit among the given points (greedy, in order)."""
    parsed = [xyz_to_op(op) for op in ops]
    taken = np.zeros(len(frac), dtype=bool)
    reps = []
    for i in range(len(frac)):
        if taken[i]:
            continue
        reps.append(i)
        for r, t in parsed:
            img = (r @ frac[i] + t) % 1.0
            for j in range(len(frac)):
                if not taken[j] and _same_frac(img, frac[j]):
                    taken[j] = True
    return reps


# --------------------------------------------------------------------------------------
# Crystal descriptions
# --------------------------------------------------------------------------------------


@dataclass(frozen=True)
class Site:
    """One crystallographic site of the asymmetric unit (fractional coordinates)."""

    label: str
    symbol: str
    xyz: tuple[float, float, float]
    wyckoff: str  # multiplicity + letter in the file's own setting, e.g. "18e"
    occupancy: float = 1.0


@dataclass(frozen=True)
class CrystalSpec:
    """Everything needed to write, and check, one crystal file."""

    filename: str
    name: str
    formula: str
    number: int
    hm: str  # Hermann-Mauguin symbol of the setting used in the file
    ops: tuple[str, ...]
    cellpar: tuple[float, float, float, float, float, float]
    z: int
    sites: tuple[Site, ...]
    centre: tuple[float, float, float]  # one molecule (or ion) centre, fractional
    centre_wyckoff: str  # as claimed for the file's setting, e.g. "4a"
    centre_site_symmetry: str  # site symmetry expected from spglib (standard setting)
    source: tuple[str, ...]
    notes: tuple[str, ...] = field(default=())

    @property
    def disordered(self) -> bool:
        return any(s.occupancy < 1.0 for s in self.sites)


def _sites_from_points(
    symbols: list[str], frac: np.ndarray, ops: tuple[str, ...], wyckoff_of, occupancy=1.0, labels=None
) -> tuple[Site, ...]:
    """One Site per orbit; ``labels`` (one per point) default to symbol + running number."""
    reps = asymmetric_unit(frac, ops)
    counts: dict[str, int] = {}
    sites = []
    for i in reps:
        counts[symbols[i]] = counts.get(symbols[i], 0) + 1
        # not wrapped into [0, 1): the asymmetric unit stays next to the molecule centre
        p = tuple(float(round(x, 6)) + 0.0 for x in frac[i])  # + 0.0 turns -0.0 into 0.0
        label = labels[i] if labels is not None else f"{symbols[i]}{counts[symbols[i]]}"
        sites.append(Site(label, symbols[i], p, wyckoff_of(p), occupancy))
    return tuple(sites)


def calcite_spec() -> CrystalSpec:
    return CrystalSpec(
        filename="calcite.cif",
        name="calcite",
        formula="C Ca O3",
        number=167,
        hm="R -3 c :H",
        ops=ops_from_ase(167, 1),
        cellpar=(CALCITE_A, CALCITE_A, CALCITE_C, 90.0, 90.0, 120.0),
        z=6,
        sites=(
            Site("Ca1", "Ca", (0.0, 0.0, 0.0), "6b"),
            Site("C1", "C", (0.0, 0.0, 0.25), "6a"),
            Site("O1", "O", (CALCITE_OX, 0.0, 0.25), "18e"),
        ),
        centre=(0.0, 0.0, 0.25),
        centre_wyckoff="6a",
        centre_site_symmetry="32",
        source=(
            "Cell: D. L. Graf, Am. Mineral. 46, 1283 (1961): a = 4.9896, c = 17.0610 A (from memory).",
            "O x = 0.2570 (from memory; refinements give 0.257-0.258, e.g. S. Maslen et al., "
            "Acta Cryst. B51, 929 (1995); H. Effenberger et al., Z. Kristallogr. 156, "
            "233 (1981)); C-O = x a = 1.282 A.",
        ),
        notes=("Hexagonal axes, obverse setting; CO3(2-) centre = C on 6a (site 32).",),
    )


def _naph_wyckoff(p) -> str:
    return "4e"


def naphthalene_p21a_frac() -> tuple[list[str], np.ndarray, float]:
    """Idealised molecule oriented by a fit to recalled ring carbons; returns rms (A)."""
    symbols, mol = naphthalene_molecule()
    cell = cellpar_to_cell(NAPH_CELL_P21A)
    target = np.array([np.array(NAPH_RECALLED[k]) @ cell for k in ("C1", "C2", "C9")])
    model = mol[[0, 1, 8]]
    a = np.vstack([model, -model])
    b = np.vstack([target, -target])
    u, _, vt = np.linalg.svd(a.T @ b)
    d = np.sign(np.linalg.det(u @ vt))
    rot = (u @ np.diag([1, 1, d]) @ vt).T  # proper rotation, model -> crystal
    cart = mol @ rot.T
    rms = float(np.sqrt(np.mean(np.sum((a @ rot.T - b) ** 2, axis=1))))
    frac = np.linalg.solve(cell.T, cart.T).T
    return symbols, frac, rms


# basis changes, new basis vectors as rows in terms of the old ones: (a', b', c') = M (a, b, c)
P21A_TO_P21C = np.array([[0, 0, 1], [0, -1, 0], [1, 0, 0]])
P21C_TO_P21N = np.array([[-1, 0, 0], [0, -1, 0], [1, 0, 1]])


def transform_cell(cellpar, frac: np.ndarray, m: np.ndarray):
    """New cellpar and fractional coordinates for basis rows ``m @ old``."""
    old = cellpar_to_cell(cellpar)
    new = m @ old
    lengths = np.linalg.norm(new, axis=1)
    angle = [
        math.degrees(math.acos(np.dot(new[j], new[k]) / (lengths[j] * lengths[k]))) for j, k in ((1, 2), (0, 2), (0, 1))
    ]
    new_frac = np.linalg.solve(new.T, (frac @ old).T).T
    return tuple(float(round(x, 6)) for x in (*lengths, *angle)), new_frac


NAPH_SOURCE = (
    "Cell (P2_1/a): a = 8.235, b = 6.003, c = 8.658 A, beta = 122.92 deg; "
    "S. C. Abrahams, J. M. Robertson and J. G. White, Acta Cryst. 2, 233 (1949); "
    "D. W. J. Cruickshank, Acta Cryst. 10, 504 (1957) (from memory).",
    "Molecule IDEALISED (D2h): C1-C2 1.364, C2-C3 1.415, C1-C9 1.421, C9-C10 1.418 A, "
    "angle C1-C9-C10 119.2 deg (rounded literature values, from memory; cf. C. P. Brock "
    "and J. D. Dunitz, Acta Cryst. B38, 2218 (1982)); C-H 1.08 A (idealised).",
    "ORIENTATION APPROXIMATE: least-squares fit of the ideal molecule to three ring-carbon "
    "positions recalled from memory of Cruickshank (1957). Do not use for intensities; "
    "the symmetry analysis only needs the molecule centre on the -1 site.",
)


NAPH_LABELS = [f"C{i}" for i in range(1, 11)] + [f"H{i}" for i in range(1, 9)]  # H_i on C_i


def naphthalene_specs() -> list[CrystalSpec]:
    symbols, frac_a, _ = naphthalene_p21a_frac()
    specs = []
    frac_c = transform_cell(NAPH_CELL_P21A, frac_a, P21A_TO_P21C)
    cell_c = frac_c[0]
    frac_n = transform_cell(cell_c, frac_c[1], P21C_TO_P21N)
    for fname, hm, ops, cellpar, frac, note in (
        (
            "naphthalene_P21a.cif",
            "P 1 21/a 1",
            P21A_OPS,
            NAPH_CELL_P21A,
            frac_a,
            "Setting P 1 21/a 1 (unique axis b, cell choice 3), as published.",
        ),
        (
            "naphthalene_P21c.cif",
            "P 1 21/c 1",
            P21C_OPS,
            cell_c,
            frac_c[1],
            "Setting P 1 21/c 1, transformed from P2_1/a by a' = c, b' = -b, c' = a.",
        ),
        (
            "naphthalene_P21n.cif",
            "P 1 21/n 1",
            P21N_OPS,
            frac_n[0],
            frac_n[1],
            "Setting P 1 21/n 1, transformed from P2_1/a by a'' = -c, b'' = b, c'' = a + c "
            "(via P2_1/c: a'' = -a', b'' = -b', c'' = a' + c').",
        ),
    ):
        specs.append(
            CrystalSpec(
                filename=fname,
                name="naphthalene",
                formula="C10 H8",
                number=14,
                hm=hm,
                ops=ops,
                cellpar=tuple(cellpar),
                z=2,
                sites=_sites_from_points(symbols, frac, ops, _naph_wyckoff, labels=NAPH_LABELS),
                centre=(0.0, 0.0, 0.0),
                centre_wyckoff="2a",
                centre_site_symmetry="-1",
                source=NAPH_SOURCE,
                notes=(
                    note,
                    "Same crystal in three settings of space group 14; Z = 2, "
                    "molecule centres on inversion centres (2a).",
                ),
            )
        )
    return specs


def c60_pa3_rotation() -> float:
    """Signed rotation angle (deg) about [111] giving the majority 'P' orientation.

    David et al. (1991) describe the ordered phase as the standard orientation turned
    by about 22 deg about [111] (from memory); in it, electron-rich 6:6 bonds face the
    pentagons of the twelve neighbours.  The sense of rotation is fixed here by that
    physical criterion: of +22 and -22 deg, the one whose nearest-neighbour contact
    brings a 6:6 bond midpoint closest to a neighbouring pentagon centre.
    """
    pent, mids = c60_faces(c60_standard())
    ops = [xyz_to_op(op) for op in ops_from_ase(205, 1)]
    # the neighbour at (1/2, 1/2, 0) is the image of the origin molecule under the
    # operation whose translation is (1/2, 1/2, 0); the cell is cubic, so the
    # fractional rotation is also the Cartesian one
    r_n = next(r for r, t in ops if _same_frac(t, np.array([0.5, 0.5, 0.0])))
    shift = np.array([0.5, 0.5, 0.0]) * C60_A_PA3
    best: tuple[float, float] | None = None
    for ang in (C60_ROT_DEG, -C60_ROT_DEG):
        r0 = rotation_about(np.array([1, 1, 1]), ang)
        pent_n = (pent @ r0.T) @ r_n.T + shift
        dmin = float(np.linalg.norm((mids @ r0.T)[:, None] - pent_n[None], axis=-1).min())
        if best is None or dmin < best[1]:
            best = (ang, dmin)
    return best[0]


def c60_pa3_spec() -> CrystalSpec:
    ops = ops_from_ase(205, 1)
    ang = c60_pa3_rotation()
    pos = c60_standard() @ rotation_about(np.array([1, 1, 1]), ang).T
    frac = pos / C60_A_PA3
    sites = _sites_from_points(["C"] * 60, frac, ops, lambda p: "24d")
    return CrystalSpec(
        filename="c60_ordered_Pa-3.cif",
        name="C60, orientationally ordered low-temperature phase",
        formula="C60",
        number=205,
        hm="P a -3",
        ops=ops,
        cellpar=(C60_A_PA3,) * 3 + (90.0,) * 3,
        z=4,
        sites=sites,
        centre=(0.0, 0.0, 0.0),
        centre_wyckoff="4a",
        centre_site_symmetry=".-3.",
        source=(
            "W. I. F. David, R. M. Ibberson, J. C. Matthewman, K. Prassides, T. J. S. Dennis, "
            "J. P. Hare, H. W. Kroto, R. Taylor and D. R. M. Walton, Nature 353, 147 (1991); "
            "P. A. Heiney et al., Phys. Rev. Lett. 66, 2911 (1991).",
            f"a = {C60_A_PA3} A (David et al. 1991, from memory). Molecule IDEALISED Ih, "
            f"6:6 = {C60_D66} A, 6:5 = {C60_D65} A (David et al. 1991, from memory).",
            f"Standard orientation (two-folds along x, y, z) rotated by {ang:+.1f} deg about "
            "[111] (published ~22 deg, equivalently 98 deg, from memory; the sense was "
            "chosen so that 6:6 bonds face neighbouring pentagons).",
        ),
        notes=("240 C per cell in 10 sites 24d; molecule centres on 4a (site -3).",),
    )


def _fm3_wyckoff(p) -> str:
    return "48h" if abs(p[0]) < 1e-9 else "96i"


def _fm3m_wyckoff(p) -> str:
    return "96j" if abs(p[0]) < 1e-9 else "192l"


def c60_fcc_spec() -> CrystalSpec:
    ops = ops_from_ase(202, 1)
    frac = c60_standard() / C60_A_FCC
    return CrystalSpec(
        filename="c60_fcc_Fm-3.cif",
        name="C60, fcc phase, one-orientation model",
        formula="C60",
        number=202,
        hm="F m -3",
        ops=ops,
        cellpar=(C60_A_FCC,) * 3 + (90.0,) * 3,
        z=4,
        sites=_sites_from_points(["C"] * 60, frac, ops, _fm3_wyckoff),
        centre=(0.0, 0.0, 0.0),
        centre_wyckoff="4a",
        centre_site_symmetry="m-3.",
        source=(
            f"a = {C60_A_FCC} A: P. A. Heiney et al., Phys. Rev. Lett. 66, 2911 (1991) (from memory).",
            f"Molecule IDEALISED Ih, 6:6 = {C60_D66} A, 6:5 = {C60_D65} A (W. I. F. David "
            "et al., Nature 353, 147 (1991), from memory), standard orientation with "
            "two-fold axes along x, y, z.",
        ),
        notes=(
            "ONE-ORIENTATION MODEL: the real room-temperature phase is orientationally "
            "disordered (Fm-3m on average); see c60_fcc_Fm-3m_disordered.cif.",
            "Site group of the molecule: Th (m-3), Wyckoff 4a.",
        ),
    )


def c60_disordered_spec() -> CrystalSpec:
    ops = ops_from_ase(225, 1)
    std = c60_standard()
    both = np.vstack([std, std @ rotation_about(np.array([0, 0, 1]), 90.0).T])
    frac = both / C60_A_FCC
    return CrystalSpec(
        filename="c60_fcc_Fm-3m_disordered.cif",
        name="C60, fcc phase, merohedrally disordered model",
        formula="C60",
        number=225,
        hm="F m -3 m",
        ops=ops,
        cellpar=(C60_A_FCC,) * 3 + (90.0,) * 3,
        z=4,
        sites=_sites_from_points(["C"] * 120, frac, ops, _fm3m_wyckoff, occupancy=0.5),
        centre=(0.0, 0.0, 0.0),
        centre_wyckoff="4a",
        centre_site_symmetry="m-3m",
        source=c60_fcc_spec().source,
        notes=(
            "Two standard orientations related by 90 deg about a cube axis, each with "
            "occupancy 0.5 (merohedral disorder). 480 half-occupied C positions per cell.",
        ),
    )


def diamond_spec() -> CrystalSpec:
    return CrystalSpec(
        filename="diamond.cif",
        name="diamond",
        formula="C",
        number=227,
        hm="F d -3 m :1",
        ops=ops_from_ase(227, 1),
        cellpar=(DIAMOND_A,) * 3 + (90.0,) * 3,
        z=8,
        sites=(Site("C1", "C", (0.0, 0.0, 0.0), "8a"),),
        centre=(0.0, 0.0, 0.0),
        centre_wyckoff="8a",
        centre_site_symmetry="-43m",
        source=(
            f"a = {DIAMOND_A} A (room temperature; common reference value, e.g. CRC "
            "Handbook of Chemistry and Physics; from memory).",
        ),
        notes=(
            "Origin choice 1 (origin at -43m, the setting spglib standardises to); C on 8a "
            "(0, 0, 0), site -43m. In origin choice 2 the same atoms sit at (1/8, 1/8, 1/8).",
        ),
    )


NH4CL_SOURCE = (
    "H. A. Levy and S. W. Peterson, Phys. Rev. 86, 766 (1952) (neutron diffraction, ND4Cl/NH4Cl).",
    f"a = {NH4CL_A} A and N-H = {NH4CL_NH} A rounded, from memory; the same a is used for "
    "both phases (idealised; the ordered low-temperature phase is slightly smaller).",
)


def nh4cl_specs() -> list[CrystalSpec]:
    x = round(NH4CL_NH / (NH4CL_A * math.sqrt(3)), 6)
    ordered = CrystalSpec(
        filename="nh4cl_ordered_P-43m.cif",
        name="ammonium chloride, ordered low-temperature phase",
        formula="Cl H4 N",
        number=215,
        hm="P -4 3 m",
        ops=ops_from_ase(215, 1),
        cellpar=(NH4CL_A,) * 3 + (90.0,) * 3,
        z=1,
        sites=(
            Site("N1", "N", (0.0, 0.0, 0.0), "1a"),
            Site("H1", "H", (x, x, x), "4e"),
            Site("Cl1", "Cl", (0.5, 0.5, 0.5), "1b"),
        ),
        centre=(0.0, 0.0, 0.0),
        centre_wyckoff="1a",
        centre_site_symmetry="-43m",
        source=NH4CL_SOURCE,
        notes=("All NH4+ ions parallel; N on 1a, H on 4e (x,x,x), Cl on 1b.",),
    )
    disordered = CrystalSpec(
        filename="nh4cl_disordered_Pm-3m.cif",
        name="ammonium chloride, orientationally disordered room-temperature phase",
        formula="Cl H4 N",
        number=221,
        hm="P m -3 m",
        ops=ops_from_ase(221, 1),
        cellpar=(NH4CL_A,) * 3 + (90.0,) * 3,
        z=1,
        sites=(
            Site("N1", "N", (0.0, 0.0, 0.0), "1a"),
            Site("H1", "H", (x, x, x), "8g", 0.5),
            Site("Cl1", "Cl", (0.5, 0.5, 0.5), "1b"),
        ),
        centre=(0.0, 0.0, 0.0),
        centre_wyckoff="1a",
        centre_site_symmetry="m-3m",
        source=NH4CL_SOURCE,
        notes=(
            "Two NH4+ orientations (related by the inversion / a 90 deg rotation); H on 8g (x,x,x) with occupancy 0.5.",
        ),
    )
    return [ordered, disordered]


def pa3_linear_spec(fname, name, formula, a, bond, centre_symbol, end_symbol, source):
    x = round(bond / (2 * a * math.sqrt(3)) if centre_symbol is None else bond / (a * math.sqrt(3)), 6)
    sites = [Site(f"{end_symbol}1", end_symbol, (x, x, x), "8c")]
    if centre_symbol is not None:
        sites.insert(0, Site(f"{centre_symbol}1", centre_symbol, (0.0, 0.0, 0.0), "4a"))
    return CrystalSpec(
        filename=fname,
        name=name,
        formula=formula,
        number=205,
        hm="P a -3",
        ops=ops_from_ase(205, 1),
        cellpar=(a,) * 3 + (90.0,) * 3,
        z=4,
        sites=tuple(sites),
        centre=(0.0, 0.0, 0.0),
        centre_wyckoff="4a",
        centre_site_symmetry=".-3.",
        source=source,
        notes=(
            f"Molecule centres on 4a (site -3), axes along the <111> diagonals; "
            f"{end_symbol} on 8c (x,x,x) with x = {x}.",
        ),
    )


def n2_spec() -> CrystalSpec:
    return pa3_linear_spec(
        "alpha_N2_Pa-3.cif",
        "alpha-nitrogen",
        "N2",
        N2_A,
        N2_BOND,
        None,
        "N",
        (
            "Pa-3 model of alpha-N2: L. Vegard, Z. Phys. 58, 497 (1929); T. H. Jordan, "
            "H. W. Smith, W. E. Streib and W. N. Lipscomb, J. Chem. Phys. 41, 756 (1964) "
            "(from memory).",
            f"a = {N2_A} A (about 20 K) and N-N = {N2_BOND} A, rounded, from memory. "
            "A P2_13 model has also been discussed; Pa-3 is the usual one.",
        ),
    )


def co2_spec() -> CrystalSpec:
    return pa3_linear_spec(
        "co2_Pa-3.cif",
        "carbon dioxide, solid (dry ice)",
        "C O2",
        CO2_A,
        CO2_BOND,
        "C",
        "O",
        (
            "A. Simon and K. Peters, Acta Cryst. B36, 2750 (1980) (single-crystal X-ray, about 150 K) (from memory).",
            f"a = {CO2_A} A and C=O = {CO2_BOND} A, rounded, from memory.",
        ),
    )


def all_crystal_specs() -> list[CrystalSpec]:
    return [
        calcite_spec(),
        *naphthalene_specs(),
        c60_pa3_spec(),
        c60_fcc_spec(),
        c60_disordered_spec(),
        diamond_spec(),
        *nh4cl_specs(),
        n2_spec(),
        co2_spec(),
    ]


# --------------------------------------------------------------------------------------
# Building and checking
# --------------------------------------------------------------------------------------


def spacegroup_of(spec: CrystalSpec) -> Spacegroup:
    """An ase Spacegroup from the explicit operations (the same route ase's CIF reader takes)."""
    return spacegroup_from_data(
        no=spec.number, symbol=spec.hm, sitesym=list(spec.ops), subtrans=[(0.0, 0.0, 0.0)], setting=1
    )


def build_atoms(spec: CrystalSpec) -> Atoms:
    """Expand the asymmetric unit with ase.spacegroup.crystal."""
    occ = [s.occupancy for s in spec.sites] if spec.disordered else None
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        return crystal(
            symbols=[s.symbol for s in spec.sites],
            basis=[s.xyz for s in spec.sites],
            occupancies=occ,
            spacegroup=spacegroup_of(spec),
            cellpar=list(spec.cellpar),
            onduplicates="error",
        )


@dataclass(frozen=True)
class CheckReport:
    """What spglib found for one crystal."""

    filename: str
    number: int
    international: str
    natoms: int
    site_wyckoffs: dict[str, str]  # label -> spglib letter (standard setting)
    site_symmetries: dict[str, str]  # label -> spglib site symmetry symbol
    centre_wyckoff: str
    centre_site_symmetry: str
    std_volume: float
    std_natoms: int


def symmetry_dataset(cell, *, symprec: float = SYMPREC):
    """spglib.get_symmetry_dataset with spglib's new error handling (raises, never warns).

    spglib 2.8 warns (DeprecationWarning) on every call while
    ``spglib.error.OLD_ERROR_HANDLING`` is True; the flag is switched off only for
    the duration of the call.
    """
    old = spglib.error.OLD_ERROR_HANDLING
    spglib.error.OLD_ERROR_HANDLING = False
    try:
        return spglib.get_symmetry_dataset(cell, symprec=symprec)
    finally:
        spglib.error.OLD_ERROR_HANDLING = old


def spglib_cell(atoms: Atoms, extra: np.ndarray | None = None):
    numbers = list(atoms.numbers)
    frac = atoms.get_scaled_positions(wrap=True)
    if extra is not None:
        frac = np.vstack([frac, extra])
        numbers += [0] * len(extra)  # dummy species 0 marks molecule centres
    return (np.array(atoms.cell), frac, numbers)


def check_crystal(spec: CrystalSpec, atoms: Atoms) -> CheckReport:
    """Check the expanded cell against the claims of ``spec``; raise RuntimeError if wrong."""
    ds = symmetry_dataset(spglib_cell(atoms))
    if ds is None or ds.number != spec.number:
        raise RuntimeError(f"{spec.filename}: spglib gives {getattr(ds, 'number', None)}, expected {spec.number}")
    kinds = atoms.arrays["spacegroup_kinds"]
    wy, ss = {}, {}
    for k, site in enumerate(spec.sites):
        idx = np.nonzero(kinds == k)[0]
        mult = len(idx)
        letters = {ds.wyckoffs[i] for i in idx}
        if len(letters) != 1 or f"{mult}{letters.pop()}" != site.wyckoff:
            raise RuntimeError(
                f"{spec.filename}: site {site.label}: spglib gives "
                f"{mult}{ds.wyckoffs[idx[0]]}, file claims {site.wyckoff}"
            )
        wy[site.label] = ds.wyckoffs[idx[0]]
        ss[site.label] = ds.site_symmetry_symbols[idx[0]]
    centres = orbit(np.array(spec.centre), spec.ops)
    dsc = symmetry_dataset(spglib_cell(atoms, centres))
    if dsc.number != spec.number:
        raise RuntimeError(f"{spec.filename}: adding centres changed the group")
    n = len(atoms)
    c_letter = dsc.wyckoffs[n]
    c_sym = dsc.site_symmetry_symbols[n]
    if f"{len(centres)}{c_letter}" != spec.centre_wyckoff or c_sym != spec.centre_site_symmetry:
        raise RuntimeError(
            f"{spec.filename}: centre is {len(centres)}{c_letter} ({c_sym}), "
            f"claimed {spec.centre_wyckoff} ({spec.centre_site_symmetry})"
        )
    if len(centres) != spec.z:
        raise RuntimeError(f"{spec.filename}: {len(centres)} centres but Z = {spec.z}")
    return CheckReport(
        spec.filename,
        ds.number,
        ds.international,
        n,
        wy,
        ss,
        c_letter,
        c_sym,
        float(abs(np.linalg.det(ds.std_lattice))),
        len(ds.std_types),
    )


# --------------------------------------------------------------------------------------
# Writers
# --------------------------------------------------------------------------------------


def _write(path: Path, text: str) -> None:
    # splitting/_io.py guarantees a file is never half-written
    sys.path.insert(0, str(HERE.parent))
    from splitting._io import atomic_write_text

    atomic_write_text(path, text)


def _comment_block(lines: list[str]) -> str:
    out = []
    for line in lines:
        words, cur = line.split(), ""
        for w in words:
            if len(cur) + len(w) + 1 > 86:
                out.append("# " + cur)
                cur = w
            else:
                cur = f"{cur} {w}".strip()
        out.append("# " + cur if cur else "#")
    return "\n".join(out) + "\n"


def _num(x: float) -> str:
    """Up to six decimals, trailing zeros dropped (``90``, ``4.9896``, ``8.078977``)."""
    return f"{x:.6f}".rstrip("0").rstrip(".")


def cif_text(spec: CrystalSpec) -> str:
    head = [
        f"{spec.filename}: {spec.name}",
        f"Generated by {GENERATOR}; edit that script, not this file.",
        "",
        "Source:",
        *spec.source,
        "",
        *spec.notes,
    ]
    a, b, c, al, be, ga = spec.cellpar
    block = spec.filename.removesuffix(".cif")
    lines = [
        f"data_{block}",
        f"_chemical_name_common '{spec.name}'",
        f"_chemical_formula_sum '{spec.formula}'",
        f"_cell_length_a {_num(a)}",
        f"_cell_length_b {_num(b)}",
        f"_cell_length_c {_num(c)}",
        f"_cell_angle_alpha {_num(al)}",
        f"_cell_angle_beta {_num(be)}",
        f"_cell_angle_gamma {_num(ga)}",
        f"_cell_formula_units_Z {spec.z}",
        f"_space_group_IT_number {spec.number}",
        f"_space_group_name_H-M_alt '{spec.hm}'",
        "",
        "loop_",
        "_space_group_symop_id",
        "_space_group_symop_operation_xyz",
    ]
    lines += [f"{i + 1} '{op}'" for i, op in enumerate(spec.ops)]
    lines += [
        "",
        "loop_",
        "_atom_site_label",
        "_atom_site_type_symbol",
        "_atom_site_symmetry_multiplicity",
        "_atom_site_Wyckoff_symbol",
        "_atom_site_fract_x",
        "_atom_site_fract_y",
        "_atom_site_fract_z",
    ]
    if spec.disordered:
        lines.append("_atom_site_occupancy")
    for s in spec.sites:
        mult, letter = s.wyckoff[:-1], s.wyckoff[-1]
        row = f"{s.label:<5s} {s.symbol:<2s} {mult:>3s} {letter} " + " ".join(f"{x:9.6f}" for x in s.xyz)
        if spec.disordered:
            row += f" {s.occupancy:.2f}"
        lines.append(row)
    return _comment_block(head) + "\n".join(lines) + "\n"


def same_point_set(sym1, frac1: np.ndarray, sym2, frac2: np.ndarray, tol: float = 1e-5) -> bool:
    """True if two lists of (symbol, fractional position) agree as sets, modulo 1."""
    if sorted(sym1) != sorted(sym2):
        return False
    used = np.zeros(len(frac2), dtype=bool)
    for s, p in zip(sym1, frac1, strict=True):
        d = (frac2 - p + 0.5) % 1.0 - 0.5
        ok = np.nonzero((np.abs(d).max(axis=1) < tol) & ~used & (np.array(sym2) == s))[0]
        if len(ok) == 0:
            return False
        used[ok[0]] = True
    return True


def check_naphthalene_settings(built: dict[str, Atoms]) -> None:
    """The three naphthalene files must describe one crystal: map each back to P2_1/a."""
    ref = built["naphthalene_P21a.cif"]
    to_a = {
        "naphthalene_P21c.cif": P21A_TO_P21C,
        "naphthalene_P21n.cif": P21C_TO_P21N @ P21A_TO_P21C,
    }
    for fname, m in to_a.items():
        other = built[fname]
        frac_in_a = other.get_scaled_positions() @ m  # rows: new basis = m @ old basis
        if not same_point_set(list(ref.symbols), ref.get_scaled_positions(), list(other.symbols), frac_in_a, tol=2e-5):
            raise RuntimeError(f"{fname} is not the same crystal as naphthalene_P21a.cif")
        if not np.allclose(m @ np.array(ref.cell), np.array(other.cell) @ _rot(ref, other, m), atol=1e-3):
            raise RuntimeError(f"{fname}: cell is not the transformed P2_1/a cell")


def _rot(ref: Atoms, other: Atoms, m: np.ndarray) -> np.ndarray:
    """Rotation taking ``other``'s Cartesian frame to ``ref``'s (cells may be oriented differently)."""
    target = m @ np.array(ref.cell)
    u, _, vt = np.linalg.svd(np.array(other.cell).T @ target)
    return u @ vt


def _same_structure(a: Atoms, b: Atoms, tol: float = 2e-4) -> bool:
    """Same symbols in the same order and the same places (mod lattice vectors)."""
    if len(a) != len(b) or list(a.symbols) != list(b.symbols):
        return False
    if not np.allclose(a.cell.cellpar(), b.cell.cellpar(), atol=1e-3):
        return False
    d = a.get_scaled_positions() - b.get_scaled_positions()
    d -= np.round(d)
    return bool(np.abs(d @ np.array(a.cell)).max() < tol)


def read_quietly(path: Path, **kw) -> Atoms:
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        return ase.io.read(path, **kw)


def poscar_text(atoms: Atoms, comment: str) -> str:
    buf = io.StringIO()
    ase.io.write(buf, atoms, format="vasp", direct=True)
    lines = buf.getvalue().splitlines()
    lines[0] = comment
    return "\n".join(lines) + "\n"


def extxyz_text(atoms: Atoms, source: str) -> str:
    a = Atoms(atoms.symbols, positions=atoms.positions, cell=atoms.cell, pbc=True)
    a.info["source"] = source
    a.info["generated_by"] = GENERATOR
    buf = io.StringIO()
    ase.io.write(buf, a, format="extxyz")
    return buf.getvalue()


def xyz_text(symbols: list[str], pos: np.ndarray, comment: str) -> str:
    lines = [str(len(symbols)), comment]
    lines += [f"{s:<2s} {x:12.6f} {y:12.6f} {z:12.6f}" for s, (x, y, z) in zip(symbols, pos, strict=True)]
    return "\n".join(lines) + "\n"


# --------------------------------------------------------------------------------------
# Free molecules
# --------------------------------------------------------------------------------------


def _centred(symbols: list[str], pos: np.ndarray) -> np.ndarray:
    m = Atoms(symbols, positions=pos).get_masses()
    return pos - (m[:, None] * pos).sum(0) / m.sum()


def molecules() -> dict[str, tuple[list[str], np.ndarray, str]]:
    """name -> (symbols, positions in angstrom centred at the centre of mass, comment)."""
    out = {}
    th = math.radians(H2O_ANGLE / 2)
    pos = np.array(
        [
            [0, 0, 0],
            [0, H2O_OH * math.sin(th), -H2O_OH * math.cos(th)],
            [0, -H2O_OH * math.sin(th), -H2O_OH * math.cos(th)],
        ]
    )
    out["h2o"] = (
        ["O", "H", "H"],
        pos,
        f"H2O C2v; O-H {H2O_OH} A, H-O-H {H2O_ANGLE} deg; W. S. Benedict, N. Gailar "
        "and E. K. Plyler, J. Chem. Phys. 24, 1139 (1956), from memory; C2 along z, "
        "molecule in the yz plane",
    )
    # NH3: H at angle alpha from the C3 axis, with HNH angle given
    hnh = math.radians(NH3_ANGLE)
    sin_a = math.sqrt((1 - math.cos(hnh)) / 1.5)  # |h_i - h_j|^2 = 3 r^2 sin^2(alpha)
    ca = -math.sqrt(1 - sin_a**2)
    hs = [
        [NH3_NH * sin_a * math.cos(2 * math.pi * k / 3), NH3_NH * sin_a * math.sin(2 * math.pi * k / 3), NH3_NH * ca]
        for k in range(3)
    ]
    out["nh3"] = (
        ["N", "H", "H", "H"],
        np.array([[0, 0, 0], *hs]),
        f"NH3 C3v; N-H {NH3_NH} A, H-N-H {NH3_ANGLE} deg; G. Herzberg, Electronic "
        "Spectra of Polyatomic Molecules (1966), from memory; C3 along z, one H in "
        "the xz plane",
    )
    t = CH4_CH / math.sqrt(3)
    out["ch4"] = (
        ["C", "H", "H", "H", "H"],
        np.array([[0, 0, 0], [t, t, t], [-t, -t, t], [-t, t, -t], [t, -t, -t]]),
        f"CH4 Td; C-H {CH4_CH} A; CRC Handbook of Chemistry and Physics, Structure "
        "of free molecules, from memory; S4 axes along x, y, z",
    )
    s = SF6_SF
    out["sf6"] = (
        ["S"] + ["F"] * 6,
        np.array([[0, 0, 0], [s, 0, 0], [-s, 0, 0], [0, s, 0], [0, -s, 0], [0, 0, s], [0, 0, -s]]),
        f"SF6 Oh; S-F {SF6_SF} A; CRC Handbook, Structure of free molecules, from memory; C4 axes along x, y, z",
    )
    out["co2"] = (
        ["C", "O", "O"],
        np.array([[0, 0, 0], [0, 0, CO2_CO_FREE], [0, 0, -CO2_CO_FREE]]),
        f"CO2 Dinfh; C-O {CO2_CO_FREE} A; CRC Handbook, Structure of free molecules, from memory; axis along z",
    )
    ang = [2 * math.pi * k / 6 for k in range(6)]
    rc, rh = BENZENE_CC, BENZENE_CC + BENZENE_CH
    pos = [[rc * math.cos(a), rc * math.sin(a), 0] for a in ang] + [
        [rh * math.cos(a), rh * math.sin(a), 0] for a in ang
    ]
    out["benzene"] = (
        ["C"] * 6 + ["H"] * 6,
        np.array(pos),
        f"C6H6 D6h; C-C {BENZENE_CC} A, C-H {BENZENE_CH} A; Herzberg (1966) / "
        "CRC Handbook, from memory; C6 along z, C1 on the x axis (C2' axes "
        "through atoms)",
    )
    for name, stagger, pg in (("ferrocene_eclipsed", 0.0, "D5h"), ("ferrocene_staggered", 36.0, "D5d")):
        r = FC_CC / (2 * math.sin(math.pi / 5))
        h = math.sqrt(FC_FEC**2 - r**2)
        pos = [[0.0, 0.0, 0.0]]
        hpos = []
        for sign, off in ((1, 0.0), (-1, stagger)):
            for k in range(5):
                a = math.radians(72 * k + off)
                pos.append([r * math.cos(a), r * math.sin(a), sign * h])
                hpos.append([(r + FC_CH) * math.cos(a), (r + FC_CH) * math.sin(a), sign * h])
        out[name] = (
            ["Fe"] + ["C"] * 10 + ["H"] * 10,
            np.array(pos + hpos),
            f"Fe(C5H5)2 {pg}; Fe-C {FC_FEC} A, C-C {FC_CC} A, C-H {FC_CH} A; A. "
            "Haaland and J. E. Nilsson, Acta Chem. Scand. 22, 2653 (1968), from "
            "memory; C5 along z, one C in the xz plane; H in the ring planes "
            "(idealised)",
        )
    v = icosahedron_vertices()
    v = v / np.linalg.norm(v[0])
    rb = B12_BB * math.sin(2 * math.pi / 5)  # circumradius of an icosahedron of edge BB
    out["b12h12"] = (
        ["B"] * 12 + ["H"] * 12,
        np.vstack([v * rb, v * (rb + B12_BH)]),
        f"closo-B12H12(2-) Ih, charge -2; B-B {B12_BB} A, B-H {B12_BH} A; J. A. "
        "Wunderlich and W. N. Lipscomb, J. Am. Chem. Soc. 82, 4427 (1960), "
        "rounded, from memory; C2 axes along x, y, z",
    )
    out["c60"] = (
        ["C"] * 60,
        c60_standard(),
        f"C60 Ih; 6:6 {C60_D66} A, 6:5 {C60_D65} A; W. I. F. David et al., Nature "
        "353, 147 (1991), from memory; C2 axes along x, y, z (standard orientation)",
    )
    sym, pos = naphthalene_molecule()
    out["naphthalene"] = (
        sym,
        pos,
        "C10H8 D2h; idealised from rounded bond lengths (C1-C2 1.364, C2-C3 "
        "1.415, C1-C9 1.421, C9-C10 1.418 A, C-H 1.08 A, from memory; cf. "
        "Brock and Dunitz, Acta Cryst. B38, 2218 (1982)); x perpendicular "
        "to the plane, z along C9-C10 (short axis), y long axis",
    )
    return {k: (s, _centred(s, np.asarray(p, dtype=float)), c) for k, (s, p, c) in out.items()}


# --------------------------------------------------------------------------------------
# Bad inputs
# --------------------------------------------------------------------------------------

BAD_HEAD = f"Generated by {GENERATOR}; deliberately bad input for tests"


def bad_files() -> dict[str, str]:
    return {
        "empty.xyz": "",
        "single_atom.xyz": xyz_text(["Ar"], np.zeros((1, 3)), f"single Ar atom at the origin. {BAD_HEAD}"),
        "overlapping.xyz": xyz_text(
            ["O", "H", "H"],
            np.array([[0, 0, 0], [0.0, 0.757, -0.586], [0.0, 0.757, -0.586]]),
            f"water with both H at the same place. {BAD_HEAD}",
        ),
        "malformed.cif": _comment_block(
            [
                f"malformed.cif: {BAD_HEAD}: truncated, garbled CIF (unterminated quote, "
                "missing cell lengths, short atom row)."
            ]
        )
        + (
            "data_malformed\n_cell_length_a 4.99(\n_cell_angle_gamma 120\n"
            "_space_group_name_H-M_alt 'R -3 c\nloop_\n_atom_site_label\n"
            "_atom_site_fract_x\n_atom_site_fract_y\n_atom_site_fract_z\nCa1 0 0\nO1 0.25"
        ),
        "partial_occupancy_no_model.cif": _comment_block(
            [
                "partial_occupancy_no_model.cif: " + BAD_HEAD + ": CsCl-type cell in which the "
                "anion site is half occupied and nothing completes it (invented)."
            ]
        )
        + (
            "data_partial\n_cell_length_a 4.1200\n_cell_length_b 4.1200\n"
            "_cell_length_c 4.1200\n_cell_angle_alpha 90\n_cell_angle_beta 90\n"
            "_cell_angle_gamma 90\n_space_group_IT_number 221\n"
            "_space_group_name_H-M_alt 'P m -3 m'\nloop_\n_space_group_symop_id\n"
            "_space_group_symop_operation_xyz\n"
            + "".join(f"{i + 1} '{op}'\n" for i, op in enumerate(ops_from_ase(221, 1)))
            + "loop_\n_atom_site_label\n_atom_site_type_symbol\n_atom_site_fract_x\n"
            "_atom_site_fract_y\n_atom_site_fract_z\n_atom_site_occupancy\n"
            "Cs1 Cs 0.0 0.0 0.0 1.0\nCl1 Cl 0.5 0.5 0.5 0.5\n"
        ),
        "molecule_no_cell.cif": _comment_block(
            [
                "molecule_no_cell.cif: " + BAD_HEAD + " (predict needs a crystal): a water "
                "molecule in Cartesian coordinates with no cell and no space group."
            ]
        )
        + (
            "data_water_no_cell\nloop_\n_atom_site_label\n_atom_site_type_symbol\n"
            "_atom_site_Cartn_x\n_atom_site_Cartn_y\n_atom_site_Cartn_z\n"
            "O1 O 0.000000 0.000000 0.065587\nH1 H 0.000000 0.756950 -0.520452\n"
            "H2 H 0.000000 -0.756950 -0.520452\n"
        ),
    }


# --------------------------------------------------------------------------------------
# Main
# --------------------------------------------------------------------------------------


def build_all(outdir: Path = HERE, *, write: bool = True) -> dict[str, str]:
    """Build and check everything; return {relative path: text}; write when asked."""
    texts: dict[str, str] = {}
    built: dict[str, Atoms] = {}
    for spec in all_crystal_specs():
        atoms = build_atoms(spec)
        check_crystal(spec, atoms)
        texts[spec.filename] = cif_text(spec)
        built[spec.filename] = atoms
    check_naphthalene_settings(built)
    calcite = built["calcite.cif"]
    src = "Graf Am. Mineral. 46 1283 (1961) cell and O x 0.2570 (from memory); see calcite.cif"
    texts["calcite.vasp"] = poscar_text(calcite, f"calcite CaCO3 R-3c; generated by {GENERATOR}; source: {src}")
    texts["calcite.extxyz"] = extxyz_text(calcite, src)
    for name, (sym, pos, comment) in molecules().items():
        texts[f"molecules/{name}.xyz"] = xyz_text(sym, pos, f"{comment}. Generated by {GENERATOR}")
    for name, text in bad_files().items():
        texts[f"bad/{name}"] = text
    if write:
        for rel, text in texts.items():
            path = outdir / rel
            path.parent.mkdir(parents=True, exist_ok=True)
            _write(path, text)
        for fname, atoms in built.items():
            back = read_quietly(outdir / fname)
            if not _same_structure(atoms, back):
                raise RuntimeError(f"{fname}: ase.io.read gives a different structure")
        for fname, fmt in (("calcite.vasp", "vasp"), ("calcite.extxyz", "extxyz")):
            if not _same_structure(calcite, read_quietly(outdir / fname, format=fmt)):
                raise RuntimeError(f"{fname}: ase.io.read gives a different structure")
    return texts


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--check", action="store_true", help="build and check, and compare with the files on disk")
    args = parser.parse_args(argv)
    texts = build_all(write=not args.check)
    if args.check:
        stale = [rel for rel, text in texts.items() if not (HERE / rel).exists() or (HERE / rel).read_text() != text]
        if stale:
            sys.stderr.write("out of date: " + ", ".join(stale) + "\n")
            return 1
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
