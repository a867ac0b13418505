"""Infrared and Raman activity of species, with polarisation: projections onto species.

For a species sigma, the projection operator
``P = sum over irreps i in sigma of (d_i / |G|) sum_g conj(chi_i(g)) D(g)``
applied to the dipole components (x, y, z) gives the infrared-active components, and
applied to the six polarisability components (xx, yy, zz, xy, xz, yz) gives the form of
the Raman tensor in the group's axes (R. Loudon, Adv. Phys. 13, 423 (1964); W. G. Fateley
et al., *Infrared and Raman Selection Rules for Molecular and Lattice Vibrations*, 1972).
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from fractions import Fraction
from functools import cache

import numpy as np

from .errors import InputError
from .groups import point_group
from .groups.linear import LinearGroup
from .groups.operations import kronecker_squares
from .groups.pointgroup import PointGroup

__all__ = ["ScatteringGeometry", "SpeciesActivity", "activity_of", "activity_table", "parse_geometry"]

_AXES = "xyz"
_PAIRS = [(0, 0), (1, 1), (2, 2), (0, 1), (0, 2), (1, 2)]
_PAIR_NAMES = ["xx", "yy", "zz", "xy", "xz", "yz"]
_POLY_NAMES = ["x²", "y²", "z²", "xy", "xz", "yz"]
_ZERO_TENSOR = (("0",) * 3,) * 3


@dataclass(frozen=True)
class SpeciesActivity:
    """Selection rules of one species.

    Attributes
    ----------
    label : str
        Mulliken label.
    dimension : int
        Degeneracy.
    ir : tuple of str
        Dipole components carried by the species ("x", "y", "z"); empty if IR inactive.
    raman : tuple of str
        Quadratic functions spanning the species' polarisability components, e.g.
        ``("x²+y²", "z²")``; empty if Raman inactive.
    raman_tensor : tuple of tuple of str
        3x3 pattern of the Raman tensor in the group's axes ("0" where the element
        vanishes; letters are independent constants; partners of a degenerate species
        are summed).
    """

    label: str
    dimension: int
    ir: tuple[str, ...]
    raman: tuple[str, ...]
    raman_tensor: tuple[tuple[str, ...], ...]

    @property
    def ir_active(self) -> bool:
        """True if the species carries a dipole component."""
        return bool(self.ir)

    @property
    def raman_active(self) -> bool:
        """True if the species carries a polarisability component."""
        return bool(self.raman)

    @property
    def raman_elements(self) -> tuple[str, ...]:
        """Non-vanishing tensor elements, e.g. ``("xx", "yy", "zz")``."""
        return tuple(_AXES[i] + _AXES[j] for i in range(3) for j in range(i, 3) if self.raman_tensor[i][j] != "0")

    def to_dict(self) -> dict[str, object]:
        """JSON-ready form."""
        return {
            "label": self.label,
            "dimension": self.dimension,
            "ir": list(self.ir),
            "raman": list(self.raman),
            "raman_tensor": [list(r) for r in self.raman_tensor],
        }


def _quadratic_basis() -> np.ndarray:
    """Orthonormal basis of the symmetric 3x3 tensors in the order of ``_PAIRS``, flattened (6, 9)."""
    basis = []
    for i, j in _PAIRS:
        b = np.zeros((3, 3))
        if i == j:
            b[i, i] = 1.0
        else:
            b[i, j] = b[j, i] = 1 / np.sqrt(2)
        basis.append(b)
    return np.array(basis).reshape(6, 9)


_QUADRATIC_BASIS = _quadratic_basis()


def _quadratic_matrices(ops: np.ndarray) -> np.ndarray:
    """6x6 matrices of the operations on symmetric tensors (orthonormal basis)."""
    flat = _QUADRATIC_BASIS
    return flat @ kronecker_squares(ops) @ flat.T  # basis_a : (R basis_b R^T)


def _projector(group: PointGroup, species_index: int, mats: np.ndarray) -> np.ndarray:
    s = group.species[species_index]
    out = np.zeros(mats.shape[1:], dtype=complex)
    for i in s.irreps:
        chi = group.irreps[i][group.class_of]
        d = group.irreps[i][0].real
        out += d / group.order * np.einsum("n,nab->ab", chi.conj(), mats)
    return out.real


def _carriers(group: PointGroup, vec_mats: np.ndarray, quad_mats: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Which species occur in the vector and in the quadratic representation, from the characters.

    The multiplicity of a species in a representation is ``sum_g chi_s(g) chi(g) / |G|``
    (for a merged complex-conjugate pair, twice that of each irrep), with ``chi(g)`` the
    trace of the representation's matrix of ``g``: only the species that occur are projected.
    """
    chars = group.characters_at_operations()
    traces = np.stack([np.trace(vec_mats, axis1=1, axis2=2), np.trace(quad_mats, axis1=1, axis2=2)], axis=1)
    counts = chars @ traces / group.order
    return counts[:, 0] > 0.5, counts[:, 1] > 0.5


def _rref(m: np.ndarray, tol: float = 1e-8) -> np.ndarray:
    """Reduced row echelon form of ``m``, zero rows dropped (partial pivoting, pivots scaled to 1).

    The matrices are at most 6 x 6: the elimination runs on Python floats, with the operations
    of :func:`_rref_numpy` in the same order, so the result is the same to the last bit.
    """
    rows, cols = m.shape
    a = m.tolist()
    r = 0
    for c in range(cols):
        if r >= rows:
            break
        column = [abs(a[i][c]) for i in range(r, rows)]
        p = r + column.index(max(column))  # the first largest, as argmax
        if column[p - r] < tol:
            continue
        a[r], a[p] = a[p], a[r]
        pivot = a[r][c]
        top = a[r] = [x / pivot for x in a[r]]
        for i in range(rows):
            if i != r:
                f = a[i][c]
                a[i] = [x - f * y for x, y in zip(a[i], top, strict=True)]
        r += 1
    return np.array(a[:r], dtype=float).reshape(r, cols)


def _rref_numpy(m: np.ndarray, tol: float = 1e-8) -> np.ndarray:
    """:func:`_rref` with numpy rows (the reference it is tested against)."""
    a = m.copy()
    rows, cols = a.shape
    r = 0
    for c in range(cols):
        if r >= rows:
            break
        p = r + int(np.argmax(np.abs(a[r:, c])))
        if abs(a[p, c]) < tol:
            continue
        a[[r, p]] = a[[p, r]]
        a[r] /= a[r, c]
        others = np.arange(rows) != r
        a[others] -= a[others, c][:, None] * a[r]  # every other row at once, as row by row
        r += 1
    return a[:r]


@cache  # the same few coefficients (1, -1, 1/2, 2 ...) recur from species to species
def _fmt_coeff(c: float, first: bool) -> str:
    """A coefficient as written before a function: ``-``, ``+2``, ``1/2``, ``+0.707``.

    The sign is that of ``c`` itself; a fraction (denominator up to 12) is used only when it
    equals ``c`` to 1e-6, so 0.97 stays 0.97 and -0.03 stays negative.

    >>> [_fmt_coeff(c, False) for c in (1.0, -1.0, 0.5, -2.0, 0.97, -0.03)]
    ['+', '-', '+1/2', '-2', '+0.97', '-0.03']
    """
    sign = "-" if c < 0 else ("" if first else "+")
    mag = Fraction(abs(c)).limit_denominator(12)
    if abs(float(mag) - abs(c)) > 1e-6:
        return f"{sign}{abs(c):.3g}"
    return sign if mag == 1 else f"{sign}{mag}"


_Z2 = np.array([-1.0, -1.0, 2.0, 0.0, 0.0, 0.0])  # 2z²-x²-y²
_Z2_VALUES = _Z2.tolist()


def _polynomial(vec: np.ndarray) -> str:
    values = vec.tolist()
    # all_close(vec, _Z2) on Python floats (the same arithmetic): the usual spelling, the positive term first
    if all(abs(c - z) <= 1e-8 + 1e-5 * abs(z) for c, z in zip(values, _Z2_VALUES, strict=True)):
        return "2z²-x²-y²"
    parts = []
    for c, name in zip(values, _POLY_NAMES, strict=True):
        if abs(c) > 1e-8:
            parts.append(_fmt_coeff(c, not parts) + name)
    return "".join(parts)


#: Quadratic functions in the forms the tables of the trade write them, tried in this order
#: for the partners of a degenerate species (coefficients of x², y², z², xy, xz, yz).
_USUAL_FORMS = (
    (1, 1, 1, 0, 0, 0),
    (1, -1, 0, 0, 0, 0),
    (-1, -1, 2, 0, 0, 0),
    (0, 0, 0, 1, 0, 0),
    (0, 0, 0, 0, 1, 0),
    (0, 0, 0, 0, 0, 1),
)
_USUAL = np.array(_USUAL_FORMS, dtype=float)


def _usual_basis(poly: np.ndarray) -> np.ndarray:
    """The span of ``poly`` (rows) written with the usual functions where they lie in it.

    A degenerate species gets x²-y², 2z²-x²-y², xy, xz, yz wherever these span it (the
    forms of the standard character tables, e.g. Wilson, Decius and Cross, Appendix X);
    rows that no usual function covers keep their reduced form.
    """
    if len(poly) < 2:
        return poly
    q, _ = np.linalg.qr(poly.T)  # orthonormal columns spanning the species
    # the usual forms are orthogonal to one another: each one in the span is independent of those before
    outside = np.linalg.norm(_USUAL - (_USUAL @ q) @ q.T, axis=1) > 1e-8
    chosen: list[np.ndarray] = [v for v, out in zip(_USUAL, outside.tolist(), strict=True) if not out]
    for row in poly:
        if len(chosen) == len(poly):
            break
        trial = np.array([*chosen, row])
        if np.linalg.matrix_rank(trial, tol=1e-8) == len(trial):
            chosen.append(row)
    return np.array(chosen)


def _tensor_pattern(rows: np.ndarray) -> tuple[tuple[str, ...], ...]:
    letters = "abcdefghjk"
    cells = [["" for _ in range(3)] for _ in range(3)]
    for k, vec in enumerate(rows.tolist()):
        for c, (i, j) in zip(vec, _PAIRS, strict=True):
            if abs(c) > 1e-8:
                for a, b in {(i, j), (j, i)}:
                    cells[a][b] += _fmt_coeff(c, not cells[a][b]) + letters[k % len(letters)]
    return tuple(tuple(x or "0" for x in row) for row in cells)


@cache
def activity_table(name: str) -> tuple[SpeciesActivity, ...]:
    """Selection rules of every species of a group, in the group's standard axes.

    Linear groups are handled through D8h / C8v, whose species up to |m| = 3 correspond
    one to one (A1 to Σ+, A2 to Σ-, E1 to Π, E2 to Δ, E3 to Φ); quadratic functions
    reach only |m| = 2.

    Examples
    --------
    >>> [a.label for a in activity_table("D4h") if a.ir_active]
    ['A2u', 'Eu']
    >>> next(a for a in activity_table("D4h") if a.label == "B1g").raman
    ('x²-y²',)
    """
    if name in ("C∞v", "D∞h"):
        return _linear_table(name)
    g = point_group(name)
    vec_mats = g.operations
    quad_mats = _quadratic_matrices(g.operations)
    carries_vector, carries_quadratic = _carriers(g, vec_mats, quad_mats)
    out = []
    for k, s in enumerate(g.species):
        ir: tuple[str, ...] = ()
        if carries_vector[k]:
            pv = _projector(g, k, vec_mats)
            norms = np.sqrt(np.sum(pv * pv, axis=0)).tolist()  # column norms (only compared with 1e-8)
            ir = tuple(_AXES[i] for i in range(3) if norms[i] > 1e-8)
        if not carries_quadratic[k]:  # no projection: nothing of the quadratic forms lies in the species
            out.append(SpeciesActivity(s.label, s.dimension, ir, (), _ZERO_TENSOR))
            continue
        pq = _projector(g, k, quad_mats)
        image = _rref(pq.T.copy())  # rows span the image (in orthonormal coordinates)
        poly = image.copy()
        poly[:, 3:] *= np.sqrt(2)  # coordinates of the quadratic form (coefficient of xy, ...)
        poly = _rref(poly)
        if s.dimension > 1:
            poly = _usual_basis(poly)
        raman = tuple(_polynomial(v) for v in poly)
        tensor_rows = image.copy()
        tensor_rows[:, 3:] /= np.sqrt(2)
        tensor = _tensor_pattern(_rref(tensor_rows)) if len(image) else _ZERO_TENSOR
        out.append(SpeciesActivity(s.label, s.dimension, ir, raman, tensor))
    return tuple(out)


def _linear_table(name: str) -> tuple[SpeciesActivity, ...]:
    from .groups.linear import linear_group

    lin: LinearGroup = linear_group(name)
    proxy = {a.label: a for a in activity_table("C8v")}
    core = {"Σ+": "A1", "Σ-": "A2", "Π": "E1", "Δ": "E2", "Φ": "E3"}
    out = []
    for s in lin.species:
        key = ("Σ" + s.label[-1]) if s.m == 0 else s.label[0]
        a = proxy.get(core.get(key, ""))
        if a is None:
            out.append(SpeciesActivity(s.label, s.dimension, (), (), _ZERO_TENSOR))
            continue
        ir = a.ir if s.parity in (0, -1) else ()
        raman, tensor = (a.raman, a.raman_tensor) if s.parity in (0, 1) else ((), _ZERO_TENSOR)
        out.append(SpeciesActivity(s.label, s.dimension, ir, raman, tensor))
    return tuple(out)


def activity_of(name: str, label: str) -> SpeciesActivity:
    """Selection rules of one species."""
    for a in activity_table(name):
        if a.label == label:
            return a
    raise InputError(f"{label!r} is not a species of {name}")


@dataclass(frozen=True)
class ScatteringGeometry:
    """A Raman scattering geometry in the notation of Damen, Porto and Tell (Phys. Rev. 142, 570 (1966)).

    ``k_i(e_i e_s)k_s``: directions of the incident and scattered light outside the
    brackets, polarisations inside; a bar (written ``-z`` or ``z̄``) reverses a direction.
    """

    incident: str
    incident_polarisation: str
    scattered_polarisation: str
    scattered: str

    def element(self) -> tuple[int, int]:
        """Indices of the Raman tensor element probed."""
        return _AXES.index(self.incident_polarisation), _AXES.index(self.scattered_polarisation)

    def sees(self, activity: SpeciesActivity) -> bool:
        """True if a species' tensor element probed by this geometry can be non-zero."""
        i, j = self.element()
        return activity.raman_tensor[i][j] != "0"

    def __str__(self) -> str:
        return f"{self.incident}({self.incident_polarisation}{self.scattered_polarisation}){self.scattered}"


_GEOM = re.compile(r"^\s*(-?[xyz]̄?)\s*\(\s*([xyz])\s*,?\s*([xyz])\s*\)\s*(-?[xyz]̄?)\s*$")


def parse_geometry(text: str) -> ScatteringGeometry:
    """Parse ``"z(xx)-z"`` or ``"z(xy)z̄"``.

    Examples
    --------
    >>> g = parse_geometry("z(xy)-z")
    >>> g.element(), str(g)
    ((0, 1), 'z(xy)-z')
    """
    m = _GEOM.match(text)
    if not m:
        raise InputError(f"scattering geometry {text!r} is not of the form z(xx)-z")
    ki, ei, es, ks = m.groups()

    def norm(d):
        return "-" + d[0] if d.endswith("̄") else d

    return ScatteringGeometry(norm(ki), ei, es, norm(ks))
