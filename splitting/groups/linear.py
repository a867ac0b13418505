"""The linear groups C∞v and D∞h, handled analytically.

A species of C∞v is fixed by its angular momentum m about the axis: Σ+ and Σ- (m = 0,
symmetric or antisymmetric under the vertical planes) and Π, Δ, Φ, Γ, ... (m = 1, 2, 3, ...)
with character 2 cos(m φ) under a rotation by φ and 0 under a vertical plane.
D∞h = C∞v x {E, i} adds g/u.  A representation given by its characters is reduced by
sampling the rotations at M equally spaced angles, with M larger than twice the largest
m the representation can hold (at most its dimension), so the discrete Fourier transform
is exact: nothing is truncated.  (G. Herzberg, *Molecular Spectra and Molecular Structure
II*, 1945, Table 20; E. B. Wilson, J. C. Decius and P. C. Cross, 1955, Appendix X.)
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from functools import cache, cached_property

import numpy as np

from ..errors import BookkeepingError, SymmetryError
from .operations import reflection, rotation
from .representation import Representation, SpeciesList

__all__ = ["LAMBDA_LETTERS", "LinearGroup", "linear_group"]

#: letters for |m| = 0, 1, 2, ... (Σ needs a + or - sign)
LAMBDA_LETTERS = ("Σ", "Π", "Δ", "Φ", "Γ", "H", "I")

Z = np.array([0.0, 0.0, 1.0])


@dataclass(frozen=True)
class LinearSpecies:
    """A species of C∞v or D∞h.

    Attributes
    ----------
    label : str
        e.g. ``"Σg+"``, ``"Πu"``, ``"Σ-"``, ``"Δ"``.
    m : int
        Angular momentum about the axis.
    reflection_sign : int
        +1 or -1 for Σ species (under a vertical plane), 0 otherwise.
    parity : int
        +1 (g), -1 (u) or 0 (C∞v).
    """

    label: str
    m: int
    reflection_sign: int
    parity: int

    @property
    def dimension(self) -> int:
        """1 for Σ species, 2 otherwise."""
        return 1 if self.m == 0 else 2

    def character(self, op: np.ndarray) -> float:
        """Character at an operation given in the standard orientation (axis along z)."""
        r = np.asarray(op, dtype=float)
        z_image = r @ Z
        sign = 1.0
        if z_image[2] < -0.5:  # the operation contains the inversion
            if self.parity == 0:
                raise SymmetryError("C∞v has no operation that reverses its axis")
            r = -r
            sign = float(self.parity)
        elif abs(z_image[2] - 1) > 1e-3:
            raise SymmetryError("the operation does not keep the molecular axis")
        if np.linalg.det(r) < 0:  # a vertical mirror plane
            return sign * (self.reflection_sign if self.m == 0 else 0.0)
        phi = np.arctan2(r[1, 0], r[0, 0])
        return sign * (1.0 if self.m == 0 else 2 * np.cos(self.m * phi))


def _label(m: int, refl: int, parity: int) -> str:
    par = {1: "g", -1: "u", 0: ""}[parity]
    if m == 0:
        return f"Σ{par}{'+' if refl > 0 else '-'}"
    return f"{LAMBDA_LETTERS[m]}{par}"


@dataclass(frozen=True, eq=False)
class LinearGroup(SpeciesList):
    """C∞v or D∞h with species up to angular momentum ``max_m``.

    Examples
    --------
    >>> g = linear_group("D∞h")
    >>> str(g.vector), str(g.axial)
    ('Σu+ + Πu', 'Σg- + Πg')
    """

    name: str
    max_m: int = 6

    @property
    def order(self) -> float:
        """Infinite."""
        return float("inf")

    @property
    def hermann_mauguin(self) -> None:
        """Linear groups are not crystallographic."""
        return None

    @cached_property
    def centrosymmetric(self) -> bool:
        """True for D∞h."""
        return self.name == "D∞h"

    @cached_property
    def species(self) -> tuple[LinearSpecies, ...]:
        """Species in table order (g before u, Σ+ Σ- Π Δ ...)."""
        parities = (1, -1) if self.centrosymmetric else (0,)
        out = []
        for p in parities:
            out.append(LinearSpecies(_label(0, 1, p), 0, 1, p))
            out.append(LinearSpecies(_label(0, -1, p), 0, -1, p))
            for m in range(1, self.max_m + 1):
                out.append(LinearSpecies(_label(m, 0, p), m, 0, p))
        return tuple(out)

    def get_species(self, label: str) -> LinearSpecies:
        """Species by label (also accepts ASCII spellings such as ``Sigma_g+``, ``Pi_u``)."""
        lab = normalise_linear_label(label)
        for s in self.species:
            if s.label == lab:
                return s
        raise SymmetryError(f"{label!r} is not a species of {self.name}")

    def character(self, label: str, op: np.ndarray) -> float:
        """Character of a species at an operation in the standard orientation."""
        return self.get_species(label).character(op)

    def sample_operations(self, count: int) -> np.ndarray:
        """Rotations by 2 pi j / count, one vertical plane, and (D∞h) their products with i."""
        ops = [rotation(Z, 2 * np.pi * j / count) for j in range(count)]
        ops.append(reflection([0.0, 1.0, 0.0]))
        if self.centrosymmetric:
            ops += [-o for o in ops]
        return np.array(ops)

    def reduce_function(
        self, chi: Callable[[np.ndarray], float], dimension: int, *, what: str = "representation"
    ) -> Representation:
        """Reduce a representation of known dimension given as a character function.

        Raises
        ------
        BookkeepingError
            If the multiplicities are not whole or need |m| above ``max_m``.
        """
        count = 2 * dimension + 2
        ops = self.sample_operations(count)
        values = np.array([chi(o) for o in ops])
        parts = [(0, values)]
        if self.centrosymmetric:
            half = count + 1
            plus, minus = values[:half], values[half:]
            parts = [(1, (plus + minus) / 2), (-1, (plus - minus) / 2)]
        mapping: dict[str, int] = {}
        for parity, vals in parts:
            rot, sigma = vals[:count], vals[count]
            phis = 2 * np.pi * np.arange(count) / count
            for m in range(0, count // 2):
                a = float(np.mean(rot * np.cos(m * phis)))
                if m == 0:
                    plus_n, minus_n = (a + sigma) / 2, (a - sigma) / 2
                    for refl, n in ((1, plus_n), (-1, minus_n)):
                        self._store(mapping, _label(0, refl, parity), n, what)
                elif abs(a) > 1e-6:
                    if m > self.max_m:
                        raise BookkeepingError(f"{what} needs |m| = {m} > {self.max_m} in {self.name}")
                    self._store(mapping, _label(m, 0, parity), a, what)
        return Representation.from_mapping(self.name, self.labels, self.dimensions, mapping)

    @staticmethod
    def _store(mapping: dict[str, int], label: str, n: float, what: str) -> None:
        if abs(n - round(n)) > 1e-6 or round(n) < 0:
            raise BookkeepingError(f"{what} does not reduce to whole multiplicities ({label}: {n:.4f})")
        if round(n):
            mapping[label] = round(n)

    def characters_of(self, rep: Representation) -> Callable[[np.ndarray], float]:
        """Character function of a representation."""
        items = [(self.get_species(lab), n) for lab, n in rep]
        return lambda op: sum(n * s.character(op) for s, n in items)

    def representation(self, mapping: dict[str, int]) -> Representation:
        """A representation from ``{label: count}``."""
        return Representation.from_mapping(
            self.name, self.labels, self.dimensions, {normalise_linear_label(k): v for k, v in mapping.items()}
        )

    @cached_property
    def vector(self) -> Representation:
        """Translations (x, y, z)."""
        return self.reduce_function(lambda r: float(np.trace(r)), 3, what="vector representation")

    @cached_property
    def axial(self) -> Representation:
        """Rotations (Rx, Ry, Rz)."""
        return self.reduce_function(
            lambda r: float(np.linalg.det(r) * np.trace(r)), 3, what="axial-vector representation"
        )

    def product(self, *labels: str) -> Representation:
        """Direct product of species."""
        spec = [self.get_species(lab) for lab in labels]
        dim = int(np.prod([s.dimension for s in spec]))
        return self.reduce_function(
            lambda r: float(np.prod([s.character(r) for s in spec])), dim, what=f"product {' x '.join(labels)}"
        )

    def symmetric_square(self, label: str) -> Representation:
        """Symmetric square of a species."""
        s = self.get_species(label)
        d = s.dimension
        return self.reduce_function(
            lambda r: (s.character(r) ** 2 + s.character(r @ r)) / 2,
            d * (d + 1) // 2,
            what=f"symmetric square of {label}",
        )

    @cached_property
    def raman(self) -> Representation:
        """Symmetric square of the vector representation."""
        return self.reduce_function(lambda r: (np.trace(r) ** 2 + np.trace(r @ r)) / 2, 6, what="polarisability")

    def to_dict(self) -> dict[str, object]:
        """JSON-ready summary."""
        return {
            "name": self.name,
            "order": "infinite",
            "species": list(self.labels[:8]),
            "vector": str(self.vector),
            "axial": str(self.axial),
        }


_ASCII = {"Sigma": "Σ", "Pi": "Π", "Delta": "Δ", "Phi": "Φ", "Gamma": "Γ"}


def normalise_linear_label(label: str) -> str:
    """Turn ASCII spellings (``Sigma_g+``, ``Pi_u``, ``Sigma+g``) into ``Σg+``, ``Πu``."""
    s = label.strip().replace("_", "").replace("^", "")
    for word, greek in _ASCII.items():
        if s.startswith(word):
            s = greek + s[len(word) :]
    if s.startswith("Σ"):
        sign = "+" if "+" in s else ("-" if "-" in s else "")
        par = "g" if "g" in s[1:] else ("u" if "u" in s[1:] else "")
        return f"Σ{par}{sign}"
    return s


@cache
def linear_group(name: str) -> LinearGroup:
    """C∞v or D∞h (ASCII aliases such as ``Dinfh`` accepted)."""
    from .catalogue import canonical_name

    canon = canonical_name(name)
    if canon not in ("C∞v", "D∞h"):
        raise SymmetryError(f"{name!r} is not a linear group")
    return LinearGroup(canon)
