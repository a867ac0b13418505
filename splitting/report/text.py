"""Plain-text rendering of results for the terminal."""

from __future__ import annotations

from collections.abc import Sequence

__all__ = ["embeddings_text", "group_text", "molecule_text", "table"]


def _width(s: str) -> int:
    # combining characters (the bar in z̄) take no column
    return sum(0 if 0x0300 <= ord(c) <= 0x036F else 1 for c in s)


def table(headers: Sequence[str], rows: Sequence[Sequence[object]], *, indent: str = "  ") -> str:
    """Aligned columns with a rule under the header.

    Examples
    --------
    >>> print(table(["a", "bb"], [[1, 2], [33, 4]]))
      a   bb
      --  --
      1   2
      33  4
    """
    cells = [[str(h) for h in headers]] + [[str(c) for c in r] for r in rows]
    widths = [max(_width(r[i]) for r in cells) for i in range(len(headers))]

    def line(r: Sequence[str]) -> str:
        return indent + "  ".join(c + " " * (w - _width(c)) for c, w in zip(r, widths, strict=True)).rstrip()

    out = [line(cells[0]), line(["-" * w for w in widths])]
    out += [line(r) for r in cells[1:]]
    return "\n".join(out)


def _num(x: float) -> str:
    r = round(x)
    if abs(x - r) < 1e-9:
        return str(int(r))
    return f"{x:.3f}"


def group_text(name: str) -> str:
    """Character table, vector and axial species, and selection rules of a group."""
    from ..activity import activity_table
    from ..groups.catalogue import canonical_name
    from ..groups.linear import linear_group
    from ..groups.pointgroup import point_group

    canon = canonical_name(name)
    act = {a.label: a for a in activity_table(canon)}
    lines = []
    if "∞" in canon:
        g = linear_group(canon)
        lines.append(f"Point group {canon} (linear; species by angular momentum about z)")
        rows = [
            [s.label, s.dimension, ", ".join(act[s.label].ir) or "-", ", ".join(act[s.label].raman) or "-"]
            for s in g.species[: (5 if not g.centrosymmetric else 12)]
            if s.m <= 3
        ]
        lines.append(table(["species", "dim", "IR", "Raman"], rows))
    else:
        g = point_group(canon)
        hm = f" ({g.hermann_mauguin})" if g.hermann_mauguin else ""
        lines.append(f"Point group {g.name}{hm}, order {g.order}, {len(g.classes)} classes")
        lines.append(_axes_note(g.name))
        headers, rows = character_rows(g.name)
        lines.append(table(headers, rows))
        if any(s.separably_degenerate for s in g.species):
            lines.append("  E species made of a complex-conjugate pair are shown merged (their characters added).")
    lines.append(f"  translations: {g.vector}    rotations: {g.axial}")
    return "\n".join(lines)


def character_rows(name: str) -> tuple[list[str], list[list[str]]]:
    """Headers and rows of the character table of a finite point group, with IR and Raman columns."""
    from ..activity import activity_table
    from ..groups.pointgroup import point_group

    g = point_group(name)
    act = {a.label: a for a in activity_table(g.name)}
    headers = ["species", *[c.name for c in g.classes], "IR", "Raman"]
    rows = []
    for s in g.species:
        a = act[s.label]
        rows.append([s.label, *[_num(x) for x in s.characters], ",".join(a.ir) or "-", ", ".join(a.raman) or "-"])
    return headers, rows


def _axes_note(name: str) -> str:
    from ..groups.catalogue import family

    fam, _ = family(name)
    notes = {
        "Dn": "z: principal axis; x: a C2' axis",
        "Dnh": "z: principal axis; x: a C2' axis (σv contains x and z)",
        "Dnd": "z: principal axis; x: a C2' axis (σd bisect the C2' axes)",
        "Cnv": "z: principal axis; xz: a σv plane",
        "Cs": "mirror plane: xy",
        "T": "x, y, z: the two-fold axes",
        "Th": "x, y, z: the two-fold axes",
        "Td": "x, y, z: the S4 axes",
        "O": "x, y, z: the four-fold axes",
        "Oh": "x, y, z: the four-fold axes",
        "I": "x, y, z: three orthogonal two-fold axes",
        "Ih": "x, y, z: three orthogonal two-fold axes",
    }
    if name in ("D2", "D2h"):
        return "  axes: x, y, z along the three two-fold axes"
    return "  axes: " + notes.get(fam, "z: principal axis")


def embeddings_text(parent: str, sub: str) -> str:
    """Every way ``sub`` sits in ``parent`` with its correlation table."""
    from ..groups.subgroups import embeddings

    out = []
    embs = embeddings(parent, sub)
    out.append(f"{embs[0].subgroup.name} in {embs[0].parent}: {len(embs)} inequivalent embedding(s)")
    for k, e in enumerate(embs, 1):
        rel = e.axis_relation()
        out.append(
            f"\n  [{k}] operations from classes {', '.join(e.parent_classes)}; "
            f"{e.conjugates} conjugate cop{'y' if e.conjugates == 1 else 'ies'}"
        )
        axes = f"x = {rel['x']}, y = {rel['y']}, z = {rel['z']}"
        out.append(f"      axes of {e.subgroup.name} in {e.parent} axes: {axes}")
        out.append(
            table([e.parent, e.subgroup.name], [[lab, str(rep)] for lab, rep in e.correlation()], indent="      ")
        )
    return "\n".join(out)


def molecule_text(result) -> str:
    """Readable free-unit analysis."""
    d = result.to_dict()
    lines = [
        f"{d['formula']}: {d['atoms']} atoms, point group {d['point_group']}",
        f"  symmetry tolerance {d['tolerance_angstrom']} Å; largest deviation from the symmetric "
        f"geometry {d['max_deviation_angstrom']:.3f} Å",
        "  axes (input frame): "
        + "; ".join(f"{k} = ({', '.join(f'{c:+.3f}' for c in v)})" for k, v in d["axes"].items()),
        f"  Γ3N  = {d['gamma_3n']}",
        f"  Γtrans = {d['translations']};  Γrot = {d['rotations']}",
        f"  Γvib = {d['vibrations']}  ({d['vibration_count']} vibrations)",
        "",
        table(
            ["species", "dim", "fundamentals", "IR", "Raman", "activity"],
            [
                [
                    m["label"],
                    m["dimension"],
                    m["count"],
                    ",".join(m["ir_components"]) or "-",
                    ", ".join(m["raman_components"]) or "-",
                    "+".join(k for k, on in (("IR", m["ir"]), ("Raman", m["raman"])) if on) or "silent",
                ]
                for m in d["species"]
            ],
        ),
        "",
        f"  {d['ir_active_fundamentals']} IR-active and {d['raman_active_fundamentals']} Raman-active fundamentals",
    ]
    return "\n".join(lines)


_ORDERED = "state: ordered: factor-group (Davydov) components with the k = 0 selection rules; sharp librations"


def _name(formula: str) -> str:
    from ..crystal.names import unit_name

    return unit_name(formula)


def setting_line(st) -> str:
    """One line: the file's setting, the standard one, the transformation, whose axes label."""

    def num(v: float) -> str:
        from fractions import Fraction

        f = Fraction(v).limit_denominator(12)
        return str(f) if abs(float(f) - v) < 1e-6 else f"{v:.4f}"

    matrix = "[" + "; ".join(" ".join(num(v) for v in row) for row in st.transformation) + "]"
    shift = "(" + ", ".join(num(v) for v in st.origin_shift) + ")"
    where = "the file's cell" if st.labels == "file" else "the standard setting"
    found = st.file_symbol if st.file_symbol is not None else "not a tabulated setting (primitive or reduced cell)"
    return (
        f"  setting of the file {found}; standard {st.standard_symbol} (P = {matrix}, origin shift {shift});"
        f" labels in the axes of {where}; Wyckoff letters of the standard setting"
        + ("; site symbols in the file's axes" if st.labels == "file" and st.site_axes is not None else "")
    )


def _standard_beside(pred) -> str:
    """``"; standard setting P2_1/c"`` when the labels' setting is not the standard one, else ``""``."""
    return "" if pred.symbol == pred.space_group.symbol else f"; standard setting {pred.space_group.symbol}"


def prediction_text(pred, estimate=None) -> str:
    """Readable report of a :class:`~splitting.crystal.results.CrystalPrediction`.

    With a model ``estimate`` (:class:`~splitting.dynamics.results.Estimate`) the correlation
    and species tables get a column of model wavenumbers, the model named beneath.
    """
    if estimate is not None:
        from ..dynamics.text import band_cell, lattice_cell
    sg = pred.space_group
    ax = pred.factor_axes
    lines = [
        f"{pred.source}",
        f"  {pred.formula} (primitive cell, {pred.atoms_primitive} atoms; {pred.atoms_input} as given)",
        f"  space group {pred.symbol} (No. {sg.number}, {sg.schoenflies}{_standard_beside(pred)}),"
        f" tolerance {sg.tolerance:g} Å",
        f"  factor group {pred.factor_group} ({'centrosymmetric' if pred.centrosymmetric else 'non-centrosymmetric'});"
        f" labels use x = {ax['x']}, y = {ax['y']}, z = {ax['z']}",
    ]
    if getattr(pred, "setting", None) is not None:
        lines.append(setting_line(pred.setting))
    if "one-orientation model" not in pred.source:
        lines.append(f"  {_ORDERED}")
    for w in pred.warnings:
        lines.append(f"  warning: {w}")
    lines.append("")
    lines.append("Units")
    rows = []
    for u in pred.units:
        rows.append(
            [
                u.name,
                u.formula,
                u.kind,
                u.free_group or "-",
                u.wyckoff,
                u.site_symmetry,
                u.site_group,
                u.count,
                f"{u.max_deviation:.3f}" if u.free_group else "-",
            ]
        )
    lines.append(
        table(
            ["unit", "Hill", "kind", "free group", "Wyckoff", "site symmetry", "site group", "Z (prim.)", "dev./Å"],
            rows,
        )
    )
    for u in pred.units:
        if not u.correlation:
            continue
        lines.append("")
        sa = u.site_axes
        lines.append(
            f"Correlation for {u.name}: {u.free_group} -> {u.site_group} (site {u.wyckoff}; "
            f"site axes x = {sa['x']}, y = {sa['y']}, z = {sa['z']}) -> {pred.factor_group}"
        )
        headers = ["free", "modes", "site", "factor group (per mode)"]
        rows = [[c.free, c.modes, str(c.site), str(c.factor)] for c in u.correlation]
        if estimate is not None:
            headers.append("model cm-1 (estimate)")
            rows = [[*r, band_cell(estimate, u.formula, c.free)] for r, c in zip(rows, u.correlation, strict=True)]
        lines.append(table(headers, rows))
        lines.append(f"  translations: {u.translations};  librations: {u.librations}")
    lines.append("")
    lines.append(f"Factor-group species (k = 0); counts are distinct frequencies; acoustic: {pred.acoustic}")
    rows = []
    for s in pred.species:
        rows.append(
            [
                s.label,
                s.dimension,
                s.internal,
                s.translational,
                s.librational,
                s.acoustic,
                s.optical,
                ",".join(s.ir) or "-",
                ", ".join(s.raman) or "-",
                "polar" if s.polar else "",
            ]
        )
        if estimate is not None:
            rows[-1].append(lattice_cell(estimate, s.label))
    headers = ["species", "dim", "internal", "transl.", "librat.", "acoustic", "optical", "IR", "Raman", "LO/TO"]
    lines.append(table(headers + (["lattice cm-1 (estimate)"] if estimate is not None else []), rows))
    t = pred.totals()
    lines.append("")
    lines.append(f"  Γ3N = {pred.gamma_3n}  (whole-cell count, checked against the unit-by-unit sum)")
    lines.append(
        f"  {t['optical']} optical frequencies: {t['ir']} IR-active, {t['raman']} Raman-active, "
        f"{t['silent']} silent" + (f", {t['polar']} polar (LO/TO split)" if t["polar"] else "")
    )
    if t["polar"]:
        both = [s.label for s in pred.species if s.polar and s.raman and s.optical]
        lines.append(
            "  polar = IR active: each splits into TO and LO (Born and Huang 1954), seen in IR reflectance"
            + (f"; {', '.join(both)} are Raman active too, so TO and LO show in Raman as well" if both else "")
        )
    if pred.centrosymmetric:
        lines.append("  centrosymmetric factor group: no frequency is both IR and Raman active (mutual exclusion)")
    lines.append("  inelastic neutron scattering: every mode is allowed")
    if estimate is not None:
        lines.append(
            f"  estimate columns: {estimate.model.removeprefix('model: ')}; uncertainty: {estimate.uncertainty_rule}"
        )
    return "\n".join(lines)


def sequence_text(seq, estimates=None) -> str:
    """Readable report of a :class:`~splitting.phases.compare.PhaseSequence`.

    With one model estimate per phase (``estimates``) the band table gets a column of model
    wavenumbers per phase, and the lattice modes their model values.
    """
    if estimates is not None:
        from ..dynamics.text import band_cell, lattice_cell
    lines = ["Phases"]
    rows = []
    for ph in seq.phases:
        sg = ph.space_group
        state = {"ordered": "ordered", "static": "static disorder", "dynamic": "rotor (dynamic disorder)"}
        rows.append(
            [ph.label, f"{ph.symbol} (No. {sg.number})", ph.factor_group, state.get(ph.state, "mixed"), ph.source]
        )
    lines.append(table(["phase", "space group", "factor group", "state", "file"], rows))
    for ph in seq.phases:
        if ph.disorder is not None:
            for u in ph.disorder.units:
                lines.append(
                    f"  {ph.label}: {u.statement} (averaged site {u.averaged_site_group}, "
                    f"Wyckoff {u.averaged_wyckoff}; {u.orientations} orientation(s) in the file; "
                    f"state {'given' if u.state_given else 'taken by default'})"
                )
            lines += [f"  {ph.label}: warning: {w}" for w in ph.disorder.warnings]
        else:
            lines.append(f"  {ph.label}: {_ORDERED}")
    lines.append("")
    lines.append("Relations")
    rows = [
        [
            f"{s.upper} -> {s.lower}",
            "yes" if s.subgroup else "no",
            s.point_index or "-",
            f"{s.cell_multiple:g}",
            f"{s.volume_ratio:.3f}",
            s.kind,
        ]
        for s in seq.steps
    ]
    lines.append(table(["step", "factor subgroup", "point index", "cell x", "volume/unit", "type"], rows))
    lines.append(
        "  cell x: units per primitive cell, lower phase over upper (2 = the cell doubles); volume/unit: "
        "primitive-cell volume per unit, lower over upper (below 1 = denser); type: t = fewer rotations, "
        "same cell; k = same rotations, larger cell"
    )
    lines.append("")
    lines.append("Bands (components per fundamental; IR / Raman counts)")
    headers, rows = band_sequence_rows(seq)
    if estimates is not None:
        headers += [f"model cm-1, {ph.label}" for ph in seq.phases]
        for row, b in zip(rows, seq.bands, strict=True):
            row += [band_cell(e, b.unit, b.band) for e in estimates]
    lines.append(table(headers, rows))
    remarks = [f"  {_name(b.unit)} {b.band}: {r}" for b in seq.bands for r in b.remarks]
    lines.append("")
    lines.append("What changes")
    lines += remarks or ["  nothing changes: every band has the same components in every phase"]
    lines.append("")
    lines.append("Lattice modes")
    for ph in seq.phases:
        lines.append(f"  {ph.label}: {ph.lattice()['text']}")
    lines += [f"  {r}" for r in seq.lattice_remarks]
    if estimates is not None:
        for ph, e in zip(seq.phases, estimates, strict=True):
            lines.append(f"  {ph.label}, model estimate (cm-1): {lattice_cell(e)}")
        lines.append(f"  model columns: {estimates[0].model.removeprefix('model: ')}")
    return "\n".join(lines)


def band_sequence_rows(seq) -> tuple[list[str], list[list[str]]]:
    """Headers and rows of the band table of a phase sequence: components per phase, IR / Raman counts."""
    headers = ["unit", "band", *[ph.label for ph in seq.phases]]
    rows = [[_name(b.unit), b.band, *[f"{s.text()}  [IR {s.ir}, R {s.raman}]" for s in b.states]] for b in seq.bands]
    return headers, rows


#: Widths (characters) of the wrapped columns of the candidate table, so it stays within 100 columns.
_LOWER_SITES_WIDTH = 20
_LOWER_BANDS_WIDTH = 26


def _wrap_items(items: list[str], sep: str, width: int) -> list[str]:
    """Join ``items`` with ``sep`` into lines of at most ``width`` characters (an item is never cut)."""
    out: list[str] = []
    for item in items:
        if out and len(out[-1]) + len(sep) + 1 + len(item) <= width:
            out[-1] += f"{sep} {item}"
        else:
            if out:
                out[-1] += sep
            out.append(item)
    return out or [""]


#: columns of the candidate table of ``lower``
LOWERING_HEADERS = ("#", "space group", "type", "index", "factor", "sites", "bands IR/Raman", "misfit")


def lowering_rows(result, *, limit: int = 40) -> list[list[object]]:
    """One row per candidate phase (columns :data:`LOWERING_HEADERS`), sites and bands unwrapped."""
    wanted = {name.rpartition("/")[2] for name, _, _ in result.observed}
    rows = []
    for k, c in enumerate(result.candidates[:limit], 1):
        sites = "; ".join(f"{u.name} {u.wyckoff} {u.site_group} x{u.count}" for u in c.prediction.units)
        shown = [b for b in c.bands() if b.band in wanted] or c.bands()[:6]
        bands = ", ".join(f"{b.band} {b.ir}/{b.raman}" for b in shown)
        if "lattice" in wanted:
            lat = c.lattice()
            bands += (
                f", lattice {lat['translational_ir'] + lat['librational_ir']}/"
                f"{lat['translational_raman'] + lat['librational_raman']}"
            )
        score = "-" if c.score is None else f"{c.score:g}"
        group = c.name
        rows.append([k, group, c.kind, c.index, c.point_group, sites, bands, score])
    return rows


#: how candidate phases are named and labelled (text and HTML)
CANDIDATE_AXES = (
    "named and labelled in the file's axes (in multiples of a, b, c where a candidate's cell is "
    "larger; standard symbol beside); Wyckoff letters of the standard setting"
)
#: the same with ``--standard-axes``
CANDIDATE_STANDARD_AXES = "named and labelled in the axes of their standard settings"


def candidate_axes(parent) -> str:
    """How the candidates below ``parent`` are named and labelled (:data:`CANDIDATE_AXES` or the
    standard-axes wording, after the parent's labels)."""
    st = parent.setting
    return CANDIDATE_STANDARD_AXES if st is not None and st.labels == "standard" else CANDIDATE_AXES


def lowering_text(result, *, limit: int = 40) -> str:
    """Readable list of candidate lower-symmetry phases."""
    p = result.parent
    lines = [
        f"Parent {p.symbol} (No. {p.space_group.number}{_standard_beside(p)}), factor group {p.factor_group}; "
        f"candidates up to index {result.max_index}: {len(result.candidates)}"
    ]
    import textwrap

    if result.candidates:
        lines += textwrap.wrap(f"Candidates: {candidate_axes(p)}", width=96, subsequent_indent="  ")

    from ..phases.disorder import STATE_MEANING

    lines += textwrap.wrap(
        f"Parent state: {STATE_MEANING[result.parent_state]}; every candidate is an ordered phase "
        "(factor-group components, sharp librations)",
        width=100,
        subsequent_indent="  ",
    )
    if result.observed:
        lines.append("Observed: " + ", ".join(f"{b} {t} = {n}" for b, t, n in result.observed))
    lines += [f"note: {n}" for n in result.notes]
    rows = []
    for row in lowering_rows(result, limit=limit):
        k, group, kind, index, factor, sites, bands, score = row
        site_lines = _wrap_items(sites.split("; "), ";", _LOWER_SITES_WIDTH)
        band_lines = _wrap_items(bands.split(", "), ",", _LOWER_BANDS_WIDTH)
        for j in range(max(len(site_lines), len(band_lines))):
            first = j == 0
            rows.append(
                [
                    *((k, group, kind, index, factor) if first else ("",) * 5),
                    site_lines[j] if j < len(site_lines) else "",
                    band_lines[j] if j < len(band_lines) else "",
                    score if first else "",
                ]
            )
    lines.append(table(list(LOWERING_HEADERS), rows))
    if result.observed:
        lines.append("")
        for k, c in enumerate(result.candidates[:limit], 1):
            if c.reasons:
                lines.append(f"  #{k} {c.symbol}: " + "; ".join(c.reasons))
    return "\n".join(lines)


def disordered_text(pred) -> str:
    """Readable report of a :class:`~splitting.phases.disorder.DisorderedPrediction`."""
    sg = pred.space_group
    lines = [
        f"{pred.source}",
        f"  averaged structure: {sg.symbol} (No. {sg.number}), factor group {pred.factor_group}",
        f"  optical translational modes of the averaged structure: {pred.translations}",
    ]
    state = {"static": "static disorder", "dynamic": "rotor (dynamic disorder)", "ordered": "ordered"}
    lines.append(f"  phase state: {state.get(pred.state, 'units in different states')}")
    lines += [f"  warning: {w}" for w in pred.warnings]
    if not pred.units:
        lines.append(f"  {_ORDERED}")
    for u in pred.units:
        lines.append("")
        lines.append(
            f"{u.name}: {state[u.state]}, state {'given' if u.state_given else 'taken by default'}, "
            f"{u.orientations} orientation(s) in the file; free group "
            f"{u.free_group}; averaged site {u.averaged_site_group} ({u.averaged_wyckoff})"
            + (f"; site of one orientation {u.orientation_site_group}" if u.orientation_site_group else "")
        )
        lines.append(f"  {u.statement}")
        if u.readings:
            lines.append(
                "  internal lines under each state (IR / Raman): "
                + "; ".join(f"{st} {ir} / {ra}" for st, ir, ra in u.readings)
            )
        head = "site of one orientation" if u.state == "static" else "free unit"
        lines.append(table(["free", "modes", head], [[p.free, p.modes, str(p.site)] for p in u.pattern]))
    lines.append("")
    lines.append("One-orientation ordered model (every unit in one orientation), for reference:")
    lines.append(prediction_text(pred.ordered_model))
    return "\n".join(lines)


def intensity_decimals(values) -> int:
    """Decimals that give the largest intensity three significant figures (all rows alike).

    Examples
    --------
    >>> intensity_decimals([1.0, 0.06]), intensity_decimals([1520.0, 3.0]), intensity_decimals([0.004])
    (2, 0, 5)
    """
    import math

    top = max((abs(v) for v in values), default=0.0)
    if not top or not math.isfinite(top):
        return 2
    return max(0, 2 - math.floor(math.log10(top)))


def explanation_text(explanation) -> str:
    """Plain-text report: one row per line with its best candidate, then the band counts."""
    e = explanation
    tech = {"ir": "infrared", "raman": "Raman"}.get(e.technique or "", "technique not given")
    out = [
        f"Explanation of {e.peaks_source or 'the measured lines'} against {e.phase} ({tech})",
        f"window {e.tolerance_cm1:g} cm-1; lattice region below {e.lattice_max_cm1:g} cm-1",
    ]
    out += [f"unit {u}" for u in e.units]
    word = {"ordered": "ordered", "static": "static disorder", "dynamic": "rotor (dynamic disorder)"}
    out.append(f"phase state: {word.get(e.state, 'units in different states')}")
    out.append("")
    out.append(f"{'line/cm-1':>10}  {'intensity':>10}  {'score':>5}  best candidate")
    digits = intensity_decimals([line.peak.intensity for line in e.lines])
    lattice_said = False
    for line in e.lines:
        p = line.peak
        if line.candidates:
            best = line.candidates[0]
            sp = line.species
            which = f"  -> {sp[0]}" if line.species_decided else (f"  -> {'/'.join(sp)}?" if sp else "")
            pol = f" [{p.polarisation}]" if p.polarisation else ""
            out.append(
                f"{p.position_cm1:10.1f}  {p.intensity:10.{digits}f}  {best.score:5.2f}  {best.label}{which}{pol}"
            )
            if best.kind != "lattice" or not lattice_said:
                out.append(f"{'':30}{best.reason}")
            lattice_said = lattice_said or best.kind == "lattice"
            for other in line.candidates[1:3]:
                out.append(f"{'':30}or {other.label} ({other.score:.2f})")
        else:
            out.append(f"{p.position_cm1:10.1f}  {p.intensity:10.{digits}f}  {'-':>5}  unexplained")
    n_un = len(e.unexplained)
    out.append("")
    out.append(
        f"{len(e.lines) - n_un} of {len(e.lines)} line{'s' if len(e.lines) != 1 else ''} explained; "
        f"{n_un} unexplained{': ' if n_un else ''}" + ", ".join(f"{p.position_cm1:.1f}" for p in e.unexplained)
    )
    for comp in e.comparisons:
        out.append("")
        out.append(
            f"band counts, {comp.unit} in {comp.phase} ({comp.factor_group}, site {comp.site_group}): "
            f"mismatch {comp.mismatch} (site-group reading {comp.site_mismatch})"
        )
        out.append(f"{'band':>10}  {'species':>8}  {'free/cm-1':>9}  {'observed':>8}  {'predicted':>9}  {'site':>4}")
        for b in comp.bands:
            out.append(
                f"{b.band:>10}  {b.species:>8}  {b.free_cm1:9.1f}  {b.observed:8d}  {b.predicted:9d}  "
                f"{b.predicted_site:4d}" + ("" if b.measured else "  outside the measured range")
            )
        if comp.outside:
            n = len(comp.outside)
            out.append(
                f"{n} band{'s' if n != 1 else ''} outside the measured range, left out of the mismatch: "
                + ", ".join(comp.outside)
            )
    if e.lattice_predicted:
        out.append(f"lattice: {e.lattice_predicted} active frequencies predicted")
    for note in e.notes:
        out.append(f"note: {note}")
    return "\n".join(out)
