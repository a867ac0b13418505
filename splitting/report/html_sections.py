"""Sections of the HTML report beyond the symmetry tables of one phase.

The structure's cell and setting, the free-unit bands with their wavenumbers and their
components, the Raman tensors with what common scattering geometries see, the assignment of
measured lines, the candidate lower-symmetry phases, the methods with their published
sources, and the versions of the software that computed the page.  Every function returns
an HTML fragment; :mod:`splitting.report.html` puts them together.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from html import escape
from typing import TYPE_CHECKING, Any

from .._display import file_name
from ..crystal.names import unit_name
from ..plot.mulliken import formula_html, hermann_mauguin_html, schoenflies_html
from ..plot.mulliken import html as species_html
from ._htmlkit import MARK_IR, MARK_RAMAN, geometry_html, rep_html, table
from .text import candidate_axes

if TYPE_CHECKING:  # pragma: no cover
    from ..crystal.results import CrystalPrediction, UnitOrbit
    from ..phases.lower import Lowering
    from ..spectra.catalogue import ModeTable
    from ..spectra.explanation import Explanation

__all__ = [
    "GEOMETRIES",
    "assignment_section",
    "bands_across",
    "bands_section",
    "candidates_section",
    "cell_items",
    "methods_section",
    "standard_beside_html",
    "tensor_section",
    "unit_tables",
    "versions",
]

#: Backscattering geometries shown for every phase (Damen, Porto and Tell notation, factor-group axes).
GEOMETRIES = ("z(xx)-z", "z(yy)-z", "z(xy)-z", "x(yy)-x", "x(zz)-x", "x(yz)-x", "y(xz)-y")

#: Fields of a prediction (or of its space group) that describe the setting, shown when present.
_SETTING_FIELDS = ("setting", "transformation", "standard_setting", "origin_shift", "change_of_basis")


# --------------------------------------------------------------------------- cell and setting


def _value_html(value: Any) -> str:
    if isinstance(value, Mapping):
        return "; ".join(f"{escape(str(k))}: {_value_html(v)}" for k, v in value.items())
    if isinstance(value, (list, tuple)):
        if value and all(isinstance(r, (list, tuple)) for r in value):
            return "(" + "; ".join(" ".join(_number(x) for x in r) for r in value) + ")"
        return ", ".join(_value_html(v) for v in value)
    if isinstance(value, float):
        return _number(value)
    return escape(str(value))


def _number(x: Any) -> str:
    try:
        return f"{float(x):g}"
    except (TypeError, ValueError):
        return escape(str(x))


def standard_beside_html(pred) -> str:
    """``"; standard setting <symbol>"`` when the labels' setting is not the standard one, else ``""``."""
    if pred.symbol == pred.space_group.symbol:
        return ""
    return f"; standard setting {hermann_mauguin_html(pred.space_group.symbol)}"


def cell_items(pred: CrystalPrediction, state: str | None = None) -> list[tuple[str, str]]:
    """Rows for the facts list: source file, cell parameters, setting and state when known.

    ``state`` is the phase's state (``"ordered"``, ``"static"``, ``"dynamic"``, or another
    word such as ``"mixed"``), shown with what it means for the lines.
    """
    items = [("structure", escape(file_name(pred.source)) or "&ndash;")]
    cp = tuple(getattr(pred, "cell_parameters", ()) or ())
    if len(cp) == 6:
        a, b, c, al, be, ga = cp
        items.append(
            (
                "cell parameters",
                f"<i>a</i> = {a:.4f} &#197;, <i>b</i> = {b:.4f} &#197;, <i>c</i> = {c:.4f} &#197;; "
                f"&alpha; = {al:.3f}&deg;, &beta; = {be:.3f}&deg;, &gamma; = {ga:.3f}&deg; "
                f"<span class=muted>(cell as given; primitive-cell volume {pred.cell_volume:.2f} &#197;<sup>3</sup>)"
                "</span>",
            )
        )
    setting = getattr(pred, "setting", None)
    if setting is not None and hasattr(setting, "standard_symbol"):
        from .text import setting_line

        items.append(("setting", escape(setting_line(setting).strip())))
    for owner in (pred, pred.space_group):
        for name in _SETTING_FIELDS:
            if owner is pred and name == "setting" and hasattr(setting, "standard_symbol"):
                continue
            value = getattr(owner, name, None)
            if hasattr(value, "shape"):  # arrays of the symmetry search are not for the page
                continue
            if value not in (None, "", (), [], {}):
                items.append((name.replace("_", " "), _value_html(value)))
    state = state or getattr(pred, "state", None)
    if state:
        from ..phases.disorder import STATE_MEANING

        meaning = STATE_MEANING.get(str(state))
        items.append(("state", escape(meaning) if meaning else _value_html(state)))
    return items


# --------------------------------------------------------------------------- free-unit bands


def unit_tables(pred: CrystalPrediction, modes: Mapping[str, ModeTable]) -> list[tuple[UnitOrbit, ModeTable]]:
    """Every molecular unit with the mode table for it (given by formula, else a bundled one)."""
    from ..errors import DataError
    from ..spectra.bands import find_unit_table
    from ..spectra.catalogue import formula_counts

    out = []
    for u in pred.units:
        if not u.correlation or u.free_group is None:
            continue
        table_ = None
        for formula, t in modes.items():
            if formula_counts(formula) == formula_counts(u.formula):
                table_ = t
        if table_ is None:
            try:
                table_ = find_unit_table(u.formula)
            except DataError:
                continue
        if table_.point_group == u.free_group and {m.species for m in table_.modes} <= {c.free for c in u.correlation}:
            out.append((u, table_))
    return out


def _marked(pred: CrystalPrediction, rep) -> str:
    """Factor-group components, each followed by its activity marks."""
    parts = []
    for lab, n in rep:
        s = pred.species_by_label(lab)
        marks = (MARK_IR if s.ir else "") + (MARK_RAMAN if s.raman else "")
        parts.append(f'<span class="nowrap">{n if n > 1 else ""}{species_html(lab)}{marks}</span>')
    return " + ".join(parts) if parts else "0"


def _free_activity(table_: ModeTable, mode) -> str:
    from ..activity import activity_of

    rule = activity_of(table_.point_group, mode.species)
    ir = rule.ir_active if mode.ir is None else mode.ir
    raman = rule.raman_active if mode.raman is None else mode.raman
    return " + ".join(n for n, on in (("IR", ir), ("Raman", raman)) if on) or "inactive"


def _mode_name(name: str) -> str:
    """``nu3`` -> &nu;<sub>3</sub>, ``T1u(2)`` -> T<sub>1u</sub>(2); other names escaped."""
    import re

    if name.startswith("nu") and name[2:].isdigit():
        return f"&nu;<sub>{name[2:]}</sub>"
    m = re.fullmatch(r"([ABETGH]\d*[gu]?'{0,2})\((\d+)\)", name)
    if m:
        from ..errors import InputError

        try:
            return f"{species_html(m[1])}({m[2]})"
        except InputError:
            pass
    return escape(name)


def _source_note(table_: ModeTable) -> str:
    return (
        f"Wavenumbers of the free {escape(table_.name)} ({escape(table_.phase)}): {escape(table_.source)}."
        f"{'' if table_.complete else ' Not every fundamental is listed.'}"
    )


def bands_section(pred: CrystalPrediction, modes: Mapping[str, ModeTable]) -> str:
    """For every molecular unit with a mode table, each band with its site and factor components."""
    out = []
    for u, t in unit_tables(pred, modes):
        corr = {c.free: c for c in u.correlation}
        noted = any(m.note for m in t.modes)
        rows = []
        for m in t.modes:
            c = corr[m.species]
            rows.append(
                [
                    _mode_name(m.name),
                    species_html(m.species),
                    f"{m.wavenumber_cm1:.0f}",
                    _free_activity(t, m),
                    rep_html(c.site),
                    _marked(pred, c.factor),
                ]
                + ([f'<span class="note">{escape(m.note)}</span>' if m.note else ""] if noted else [])
            )
        out.append(
            f"<h3>Bands of {formula_html(u.name)}</h3>"
            + table(
                [
                    "band",
                    f"free ({schoenflies_html(t.point_group)})",
                    "&nu; / cm<sup>&minus;1</sup>",
                    "free unit",
                    f"site {escape(u.wyckoff)} ({schoenflies_html(u.site_group)})",
                    f"factor group ({schoenflies_html(pred.factor_group)})",
                ]
                + (["note"] if noted else []),
                rows,
                numeric=(2,),
                caption="Each fundamental of the free unit, its wavenumber in the free unit, and the components "
                f"it splits into on the site and in the crystal ({MARK_IR} IR active, {MARK_RAMAN} Raman "
                "active). The crystal does not move the lines to these values: shifts of a few cm<sup>"
                "&minus;1</sup> to tens of cm<sup>&minus;1</sup> are usual.",
            )
            + f'<p class="source">{_source_note(t)}</p>'
        )
    return "".join(out)


def bands_across(predictions: Sequence[tuple[str, CrystalPrediction]], modes: Mapping[str, ModeTable]) -> str:
    """One table per shared unit: each band's factor-group components, phase by phase."""
    per_phase = [dict((u.formula, (u, t)) for u, t in unit_tables(p, modes)) for _, p in predictions]
    shared = set(per_phase[0])
    for d in per_phase[1:]:
        shared &= set(d)
    out = []
    for formula in sorted(shared):
        tables_ = [d[formula][1] for d in per_phase]
        if len({t.name for t in tables_}) != 1:
            continue
        t = tables_[0]
        rows = []
        for m in t.modes:
            row = [_mode_name(m.name), species_html(m.species), f"{m.wavenumber_cm1:.0f}"]
            for (_, pred), d in zip(predictions, per_phase, strict=True):
                corr = {c.free: c for c in d[formula][0].correlation}
                row.append(_marked(pred, corr[m.species].factor))
            rows.append(row)
        heads = ["band", f"free ({schoenflies_html(t.point_group)})", "&nu; / cm<sup>&minus;1</sup>"]
        heads += [f"{escape(lab)} ({schoenflies_html(p.factor_group)})" for lab, p in predictions]
        out.append(
            f"<h3>Bands of {formula_html(unit_name(formula))}, phase by phase</h3>"
            + table(
                heads,
                rows,
                numeric=(2,),
                caption="Factor-group components of every band in each phase.",
            )
            + f'<p class="source">{_source_note(t)}</p>'
        )
    return "".join(out)


# --------------------------------------------------------------------------- Raman tensors


def _tensor_html(pattern: Sequence[Sequence[str]]) -> str:
    cells = "".join(f"<span>{escape(x) if x != '0' else '&middot;'}</span>" for row in pattern for x in row)
    return f'<span class="tensor" role="img" aria-label="Raman tensor">{cells}</span>'


def tensor_section(pred: CrystalPrediction) -> str:
    """Raman tensor of every Raman-active species and the species each common geometry sees."""
    raman = [s for s in pred.species if s.raman and s.optical]
    if not raman:
        return ""
    rows = [
        [species_html(s.label), str(s.optical), escape(", ".join(s.raman)), _tensor_html(s.raman_tensor)] for s in raman
    ]
    tens = table(
        ["species", "optical", "polarisability components", "tensor (<i>xx</i> &hellip; <i>zz</i>)"],
        rows,
        numeric=(1,),
        caption="Form of the Raman tensor of each Raman-active species in the factor group's axes (rows and "
        "columns x, y, z; a dot is an element that vanishes, equal letters are equal elements; the "
        "partners of a degenerate species are summed) (Loudon 1964).",
        css="tensors",
    )
    grows = []
    for g in GEOMETRIES:
        seen = pred.seen_in(g)
        text = " + ".join(f"{n}{species_html(lab)}" if n > 1 else species_html(lab) for lab, n in seen)
        grows.append([geometry_html(g), text or "nothing"])
    geo = table(
        ["geometry", "optical lines allowed (species)"],
        grows,
        caption="Backscattering geometries written as in Damen, Porto and Tell (1966): incident direction, "
        "(incident and scattered polarisation), scattered direction, all in the factor group's axes stated "
        "above. The number before a species counts its distinct frequencies.",
    )
    return f"<h3>Raman tensors and scattering geometries</h3>{tens}{geo}"


# --------------------------------------------------------------------------- measured lines


def assignment_section(explanations: Sequence[Explanation], figures: Any = None, index: int = 0) -> str:
    """The assignment of measured lines: every line with its best explanation, and the band counts."""
    if not explanations:
        return ""
    out = ['<section class="phase" id="assignment"><h2>Assignment of the measured lines</h2>']
    for e in explanations:
        tech = {"ir": "IR", "raman": "Raman", None: "IR or Raman"}[e.technique]
        src = escape(file_name(e.peaks_source)) if e.peaks_source else "the given lines"
        n = len(e.lines)
        out.append(
            f"<h3>{tech}: {src} against {escape(file_name(e.phase))}</h3>"
            f"<p>{n} line{'s' if n != 1 else ''}; {n - len(e.unexplained)} explained. Window "
            f"{e.tolerance_cm1:g} cm<sup>&minus;1</sup> about each free wavenumber; lattice region below "
            f"{e.lattice_max_cm1:g} cm<sup>&minus;1</sup> ({e.lattice_predicted} lattice frequencies active).</p>"
        )
        if figures is not None:
            from ..plot.explain import explanation_axes, explanation_figure

            ax = explanation_axes()
            explanation_figure(e, ax=ax)
            fig = ax.figure
            out.append(
                f'<figure class="explain">{figures.svg(fig)}<figcaption>{tech} lines of {src} with their best '
                "assignments; ticks below the baseline mark the active components of each band.</figcaption></figure>"
            )
        from .text import intensity_decimals

        digits = intensity_decimals([line.peak.intensity for line in e.lines])
        rows = []
        for line in e.lines:
            p = line.peak
            best = line.candidates[0] if line.candidates else None
            others = "; ".join(escape(c.label) for c in line.candidates[1:3])
            rows.append(
                [
                    f"{p.position_cm1:.1f}",
                    f"{p.intensity:.{digits}f}",
                    escape(best.label) if best else "<em>unexplained</em>",
                    " ".join(species_html(s) for s in best.species) if best else "&ndash;",
                    f"{best.predicted_cm1:.0f}" if best and best.predicted_cm1 is not None else "&ndash;",
                    f"{best.score:.2f}" if best else "&ndash;",
                    others or "&ndash;",
                ]
            )
        out.append(
            table(
                [
                    "line / cm<sup>&minus;1</sup>",
                    "intensity",
                    "best assignment",
                    "species",
                    "reference / cm<sup>&minus;1</sup>",
                    "score",
                    "next candidates",
                ],
                rows,
                numeric=(0, 1, 4, 5),
                caption="Score between 0 and 1: the prior of the kind of explanation times the closeness to "
                "its reference position (docs/explain.md).",
            )
        )
        for comp in e.comparisons:
            crow = [
                [
                    _mode_name(b.band),
                    species_html(b.species),
                    f"{b.free_cm1:.0f}",
                    str(b.observed),
                    str(b.predicted),
                    str(b.predicted_site),
                    "" if b.measured else "outside",
                ]
                for b in comp.bands
            ]
            outside = (
                f" {len(comp.outside)} band{'s' if len(comp.outside) != 1 else ''} outside the measured range "
                "(&lsquo;outside&rsquo;) are left out of the misfit."
                if comp.outside
                else ""
            )
            out.append(
                table(
                    ["band", "free", "&nu; / cm<sup>&minus;1</sup>", "observed", "crystal", "site only", "range"],
                    crow,
                    numeric=(2, 3, 4, 5),
                    caption=f"Lines per band of {formula_html(unit_name(comp.unit))}: observed, "
                    "predicted by the factor group "
                    f"{schoenflies_html(comp.factor_group)} of {escape(file_name(comp.phase))}, and by the site "
                    f"group {schoenflies_html(comp.site_group)} alone (a phase with orientational disorder); "
                    f"misfit {comp.mismatch} (site only: {comp.site_mismatch}).{outside}",
                )
            )
        for note in e.notes:
            out.append(f'<p class="muted">{escape(note)}</p>')
    out.append("</section>")
    return "".join(out)


# --------------------------------------------------------------------------- candidate phases


def candidates_section(lowering: Lowering | None, *, limit: int = 12) -> str:
    """The candidate lower-symmetry phases, best first when counts were observed."""
    if lowering is None:
        return ""
    parent = lowering.parent
    cands = lowering.candidates[:limit]
    rows = []
    for k, c in enumerate(cands, 1):
        number, standard = c.space_group
        beside = "" if c.symbol == standard else f", {hermann_mauguin_html(standard)}"
        rows.append(
            [
                str(k),
                f"{hermann_mauguin_html(c.symbol)} (No. {number}{beside})",
                schoenflies_html(c.point_group),
                escape(c.kind),
                str(c.index),
                str(c.cell_multiple),
                f"{c.score:.2f}" if c.score is not None else "&ndash;",
                escape("; ".join(c.reasons)) or ("&ndash;" if c.realised else ""),
            ]
        )
    observed = ", ".join(f"{escape(b)} {escape(t)}: {n}" for b, t, n in lowering.observed)
    obs = f" Ranked by the observed counts ({observed}); a lower misfit is better." if observed else ""
    more = len(lowering.candidates) - len(cands)
    tail = f" {more} more candidate{'s' if more != 1 else ''} not shown." if more > 0 else ""
    return (
        '<section class="phase" id="candidates"><h2>Candidate lower-symmetry phases</h2>'
        f"<p>Subgroups of {hermann_mauguin_html(parent.symbol)} (No. {parent.space_group.number}"
        f"{standard_beside_html(parent)}) "
        f"of {escape(file_name(parent.source))} up to index {lowering.max_index}: t (same cell, fewer "
        f"rotations), k (same rotations, larger cell or no centring) or both. "
        f"Candidates are {escape(candidate_axes(parent))}.{obs}{tail}</p>"
        + table(
            ["rank", "space group", "factor group", "kind", "index", "cell &times;", "misfit", "where it disagrees"],
            rows,
            numeric=(0, 4, 5, 6),
            caption="&lsquo;cell &times;&rsquo;: how many times larger the primitive cell is than the parent's.",
        )
        + "</section>"
    )


# --------------------------------------------------------------------------- methods and versions

_SOURCES = (
    "S. Bhagavantam and T. Venkatarayudu, Proc. Indian Acad. Sci. A 9, 224 (1939): the factor-group method.",
    "R. S. Halford, J. Chem. Phys. 14, 8 (1946): the site-group method.",
    "D. F. Hornig, J. Chem. Phys. 16, 1063 (1948): the spectra of molecular crystals.",
    "H. Winston and R. S. Halford, J. Chem. Phys. 17, 607 (1949): motions of molecules in crystals.",
    "W. G. Fateley, F. R. Dollish, N. T. McDevitt and F. F. Bentley, <i>Infrared and Raman Selection Rules for "
    "Molecular and Lattice Vibrations: The Correlation Method</i>, Wiley (1972).",
    "D. L. Rousseau, R. P. Bauman and S. P. S. Porto, J. Raman Spectrosc. 10, 253 (1981): normal-mode "
    "determination in crystals.",
    "E. B. Wilson, J. C. Decius and P. C. Cross, <i>Molecular Vibrations</i>, McGraw-Hill (1955).",
    "R. S. Mulliken, J. Chem. Phys. 23, 1997 (1955): species labels and axis conventions.",
    "T. C. Damen, S. P. S. Porto and B. Tell, Phys. Rev. 142, 570 (1966): scattering-geometry notation.",
    "R. Loudon, Adv. Phys. 13, 423 (1964): Raman tensors of the crystal classes.",
    "J. D. Dixon, Numer. Math. 10, 446 (1967): computing group characters.",
    "<i>International Tables for Crystallography</i>, Vol. A (space groups, Wyckoff positions, settings) and "
    "Vol. A1 (maximal subgroups).",
    "A. Togo and I. Tanaka, spglib: a software library for crystal symmetry search, arXiv:1808.01590 (2018).",
    "A. H. Larsen et al., The atomic simulation environment, J. Phys.: Condens. Matter 29, 273002 (2017).",
    "B. Cordero et al., Dalton Trans. 2832 (2008): covalent radii used to find the units.",
)


def methods_section(mode_sources: Sequence[str] = ()) -> str:
    """How the page was computed, with the published methods it follows."""
    steps = (
        "The space group, its operations and the Wyckoff positions come from spglib; bonded atoms (covalent "
        "radii) form the units, and the point group of each free unit is found from its coordinates.",
        "Correlation method: each free-unit species is restricted to the site group, evaluated on the site "
        "operations themselves in the unit's own orientation, and the site species are induced to the factor "
        "group at k = 0 (the coset route and the unit-by-unit route must agree).",
        "Translations and librations of each unit follow from the vector and axial-vector representations "
        "in the same way; one set of acoustic modes is removed.",
        "Every prediction is checked against the whole-cell count &Gamma;<sub>3N</sub>, reduced independently.",
        "IR activity from the vector representation, Raman activity and tensor forms from its symmetric "
        "square, projected onto each species; inelastic neutron scattering sees every mode.",
    )
    src = "".join(f"<li>{s}</li>" for s in _SOURCES)
    tables_ = "".join(f"<li>{escape(s)}</li>" for s in dict.fromkeys(mode_sources))
    tables_html = f"<h3>Free-unit wavenumbers</h3><ul class=refs>{tables_}</ul>" if tables_ else ""
    return (
        '<section class="methods" id="methods"><h2>Methods</h2><ol>'
        + "".join(f"<li>{s}</li>" for s in steps)
        + f"</ol><h3>Published sources</h3><ol class=refs>{src}</ol>{tables_html}</section>"
    )


def versions() -> str:
    """``splitting 0.x, spglib 2.x, ase 3.x`` (installed versions)."""
    from importlib.metadata import PackageNotFoundError, version

    parts = []
    for name in ("splitting", "spglib", "ase"):
        try:
            parts.append(f"{name} {version(name)}")
        except PackageNotFoundError:  # pragma: no cover - running from a source tree without install
            parts.append(f"{name} (version unknown)")
    return ", ".join(parts)
