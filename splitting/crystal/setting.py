"""The setting of the file's cell: which Hermann-Mauguin symbol it is written in, and the
transformation to the standard setting (International Tables for Crystallography, Vol. A,
Table 4.3.2.1 for the settings; spglib's tables of Hall symbols for the operations).

The file's setting is found without a new symmetry search: the standard setting's operations
(spglib's tables) are carried into the file's basis by spglib's transformation matrix P and
compared, up to a shift of origin, with the operations of every tabulated setting of the
same space-group type.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from functools import cache

import numpy as np

__all__ = ["Setting", "file_settings", "setting_of", "short_symbol"]

#: one position of an oriented site-symmetry symbol (ITA): an axis, a mirror, 2/m, -1, or a dot
_SITE_PART = re.compile(r"-?[1-6](?:/m)?|m|\.")
#: origins tried when comparing a setting's operations (multiples of 1/8 of the axes)
_ORIGINS = np.array(np.meshgrid(*[np.arange(8) / 8] * 3, indexing="ij")).reshape(3, -1).T
_ORIGINS_48 = np.rint(_ORIGINS * 48).astype(np.int64)


@dataclass(frozen=True)
class Setting:
    """The file's setting, the standard setting and the transformation between them.

    Attributes
    ----------
    file_symbol : str or None
        Full Hermann-Mauguin symbol of the setting the file's cell is written in (e.g.
        ``"P b n m"``, ``"P 1 2_1/n 1"``), or None when the file's cell is not the
        conventional cell of any tabulated setting (a primitive or reduced cell).
    file_choice : str or None
        spglib's name of that setting (``"cab"``, ``"b2"``, ``"R"`` ...).
    standard_symbol : str
        Full Hermann-Mauguin symbol of the standard setting.
    standard_choice : str
    transformation : tuple of tuple of float
        spglib's matrix P: (a_s, b_s, c_s) = (a, b, c) P^-1.
    origin_shift : tuple of float
        spglib's origin shift p: x_s = P x + p.
    labels : str
        ``"file"`` when labels use the file's axes, ``"standard"`` when the standard setting's.
    site_axes : tuple of int or None
        For an orthorhombic group, the file's axis (0, 1, 2 for a, b, c) along which each of the
        three positions of the standard setting's oriented site symbol points; None when the
        positions are not the cell axes (other crystal systems) or do not fall on the file's
        axes (a primitive cell of a centred lattice).
    """

    file_symbol: str | None
    file_choice: str | None
    standard_symbol: str
    standard_choice: str
    transformation: tuple[tuple[float, ...], ...]
    origin_shift: tuple[float, ...]
    labels: str
    site_axes: tuple[int, ...] | None = None

    def site_symbol(self, standard: str) -> str:
        """An oriented site-symmetry symbol of the standard setting written in the axes the labels use.

        The three positions of an orthorhombic symbol follow the file's axes (``".m."`` of Pnma
        is ``"..m"`` in Pbnm); symbols of other systems, and every symbol with ``--standard-axes``,
        stay as they are.

        Examples
        --------
        >>> p = ((0, 1, 0), (0, 0, 1), (1, 0, 0))
        >>> st = Setting("P b n m", "cab", "P n m a", "", p, (0, 0, 0), "file", site_axes=(1, 2, 0))
        >>> st.site_symbol(".m."), st.site_symbol("-1"), st.site_symbol("2/m..")
        ('..m', '-1', '.2/m.')
        """
        if self.labels != "file" or self.site_axes is None:
            return standard
        parts = _SITE_PART.findall(standard)
        if len(parts) != 3 or "".join(parts) != standard:
            return standard
        out = ["."] * 3
        for j, part in enumerate(parts):
            out[self.site_axes[j]] = part
        return "".join(out)

    @property
    def label_symbol(self) -> str:
        """Short symbol of the setting the labels refer to: the file's (``"P2_1/a"``) when the
        labels use the file's axes and the file's cell is a tabulated setting, else the
        standard one."""
        if self.labels == "file" and self.file_symbol is not None:
            return short_symbol(self.file_symbol)
        return short_symbol(self.standard_symbol)

    @property
    def is_standard(self) -> bool:
        """True when the file is written in the standard setting."""
        return self.file_symbol == self.standard_symbol

    def to_dict(self) -> dict[str, object]:
        """JSON-ready form."""
        return {
            "file_symbol": self.file_symbol,
            "file_choice": self.file_choice,
            "standard_symbol": self.standard_symbol,
            "standard_choice": self.standard_choice,
            "transformation_matrix": [list(r) for r in self.transformation],
            "origin_shift": list(self.origin_shift),
            "labels": self.labels,
            "label_symbol": self.label_symbol,
            "wyckoff_letters": "standard setting",
            "site_symbols": "file" if self.labels == "file" and self.site_axes is not None else "standard",
        }


def short_symbol(full: str) -> str:
    """Short Hermann-Mauguin symbol of a full one (International Tables, Vol. A, Table 4.3.2.1).

    Monoclinic settings drop the two 1s; every other symbol is written without spaces.

    Examples
    --------
    >>> short_symbol("P 1 2_1/a 1"), short_symbol("P b n m"), short_symbol("P 3 1 2"), short_symbol("P -1")
    ('P2_1/a', 'Pbnm', 'P312', 'P-1')
    """
    lattice, *rest = full.split()
    if len(rest) == 3 and rest.count("1") == 2:
        rest = [t for t in rest if t != "1"]
    return lattice + "".join(rest)


def _setting_symbol(international: str) -> str:
    """The symbol of a setting from spglib's ``international`` text (``"P 2_1/c = P 1 2_1/n 1"``)."""
    parts = [p.strip() for p in international.split("=")]
    return parts[1] if len(parts) > 1 else parts[0]


@cache
def _type(hall: int):
    import spglib

    from .spacegroup import _quiet_spglib

    with _quiet_spglib():
        return spglib.get_spacegroup_type(hall)


@cache
def _halls_of(number: int) -> tuple[int, ...]:
    """Hall numbers of a space-group type; spglib numbers the Hall symbols in order of the
    space-group number, so the run is found by bisection (checked in the tests)."""
    import bisect

    first = bisect.bisect_left(range(1, 531), number, key=lambda h: int(_type(h).number)) + 1
    out = []
    for h in range(first, 531):
        if int(_type(h).number) != number:
            break
        out.append(h)
    return tuple(out)


@cache
def _operations(hall: int) -> tuple[np.ndarray, np.ndarray]:
    from .spacegroup import _database

    w, t = _database(hall)
    return w.astype(int), t


def _keys(w: np.ndarray, t: np.ndarray) -> np.ndarray:
    """Distinct integer keys of operations modulo the lattice (rotation entries, translations in 1/48)."""
    tt = np.rint(np.mod(t, 1.0) * 48).astype(np.int64) % 48
    rr = (w.reshape(len(w), 9).astype(np.int64) + 1) @ (3 ** np.arange(9, dtype=np.int64))
    return np.unique(rr * 48**3 + tt @ np.array([48 * 48, 48, 1], dtype=np.int64))


@cache
def _matching(hall: int, p_key: bytes) -> tuple[int, ...]:
    p_mat = np.frombuffer(p_key).reshape(3, 3)
    w_s, t_s = _operations(hall)
    p_inv = np.linalg.inv(p_mat)
    w_f = np.einsum("ij,njk,kl->nil", p_inv, w_s, p_mat)
    if np.abs(w_f - np.rint(w_f)).max() > 1e-6:
        return ()  # the file's cell is not a conventional cell of any setting
    w_f = np.rint(w_f).astype(int)
    t_f = t_s @ p_inv.T
    if np.abs(t_f * 48 - np.rint(t_f * 48)).max() > 1e-6:
        return ()
    number = int(_type(hall).number)
    found = []
    own = _keys(w_f, t_f)
    own_rotations = np.unique(own // 48**3)
    for h in _halls_of(number):
        target, rotations = _setting_keys(h)
        if len(target) != len(own) or not np.array_equal(rotations, own_rotations):
            continue
        if _any_origin_matches(w_f, t_f, target, distinct=len(own) == len(w_f)):
            found.append(h)
    return tuple(found)


@cache
def _setting_keys(hall: int) -> tuple[np.ndarray, np.ndarray]:
    """:func:`_keys` of a tabulated setting's operations, and the keys of their rotation parts."""
    target = _keys(*_operations(hall))
    return target, np.unique(target // 48**3)


def _any_origin_matches(w_f: np.ndarray, t_f: np.ndarray, target: np.ndarray, *, distinct: bool | None = None) -> bool:
    """True when the operations, with the origin moved to one of :data:`_ORIGINS`, have the keys ``target``.

    All origins are tried at once; operations that coincide modulo the lattice (never in a
    tabulated setting) fall back to one origin at a time.  ``distinct`` tells, when known, whether
    the operations are distinct modulo the lattice.
    """
    if distinct is None:
        distinct = len(_keys(w_f, t_f)) == len(w_f)
    if not distinct:
        return any(np.array_equal(_keys(w_f, t_f + (w_f - np.eye(3)) @ o), target) for o in _ORIGINS)
    # in 1/48 of the axes (the caller checked that the translations are whole there), exactly
    t48 = np.rint(np.asarray(t_f, dtype=float) * 48).astype(np.int64)
    w48 = np.asarray(w_f, dtype=np.int64) - np.eye(3, dtype=np.int64)
    rr = (w_f.reshape(len(w_f), 9).astype(np.int64) + 1) @ (3 ** np.arange(9, dtype=np.int64))

    def keys(origins: np.ndarray, ops: slice) -> np.ndarray:
        tt = (t48[ops][None] + np.einsum("nij,oj->oni", w48[ops], origins)) % 48  # (origins, ops, 3)
        return rr[ops][None] * 48**3 + tt @ np.array([48 * 48, 48, 1], dtype=np.int64)

    # origins where a few operations already have keys of the target, then all operations there
    first = keys(_ORIGINS_48, slice(0, 4))
    at = np.minimum(np.searchsorted(target, first), len(target) - 1)  # ``target`` is sorted
    origins = _ORIGINS_48[np.all(target[at] == first, axis=1)]
    found = np.sort(keys(origins, slice(None)), axis=1)
    return bool(np.any(np.all(found == target[None], axis=1)))


def file_settings(hall: int, transformation: np.ndarray) -> tuple[int, ...]:
    """Hall numbers of the tabulated settings the file's cell is written in (empty if none)."""
    p = np.ascontiguousarray(np.asarray(transformation, dtype=float))
    p = np.where(np.abs(p - np.rint(p * 6) / 6) < 1e-6, np.rint(p * 6) / 6, p)
    return _matching(int(hall), p.tobytes())


def setting_of(hall: int, transformation: np.ndarray, origin_shift: np.ndarray, *, standard_axes: bool) -> Setting:
    """The :class:`Setting` of a cell whose standard setting has this Hall number."""
    std = _type(int(hall))
    found = file_settings(hall, transformation)
    if found:
        t = _type(found[0])
        symbols = {_setting_symbol(_type(h).international) for h in found}
        file_symbol = _setting_symbol(t.international) if len(symbols) == 1 else None
        file_choice = str(t.choice) if len(found) == 1 else None
        if int(hall) in found:  # the file's basis is the standard's (origin choices look alike)
            file_symbol = _setting_symbol(std.international)
            file_choice = str(std.choice) if len(found) == 1 else None
    else:
        file_symbol, file_choice = None, None
    return Setting(
        file_symbol=file_symbol,
        file_choice=file_choice,
        standard_symbol=_setting_symbol(std.international),
        standard_choice=str(std.choice),
        transformation=tuple(tuple(round(float(v), 6) + 0.0 for v in row) for row in np.asarray(transformation)),
        origin_shift=tuple(round(float(v), 6) + 0.0 for v in np.asarray(origin_shift)),
        labels="standard" if standard_axes else "file",
        site_axes=_site_axes(int(std.number), transformation),
    )


def _site_axes(number: int, transformation: np.ndarray) -> tuple[int, ...] | None:
    """The file's axis of each standard axis for an orthorhombic group (see :attr:`Setting.site_axes`)."""
    if not 16 <= number <= 74:
        return None
    q = np.linalg.inv(np.asarray(transformation, dtype=float))  # column j: standard axis j in the file's basis
    nonzero = np.abs(q) > 1e-6
    if not np.all(nonzero.sum(axis=0) == 1) or not np.all(nonzero.sum(axis=1) == 1):
        return None
    return tuple(int(np.flatnonzero(nonzero[:, j])[0]) for j in range(3))
