"""Plain-text table of an estimate (pure formatting; the CLI prints it)."""

from __future__ import annotations

from .results import Estimate

__all__ = ["estimate_text"]


def _wn(x: float) -> str:
    return f"{-x:7.1f}i" if x < 0 else f"{x:8.1f}"


def estimate_text(est: Estimate, *, internal: bool = True) -> str:
    """The lines, bands and model of an estimate as a readable table."""
    out = [
        f"{est.source}: factor group {est.factor_group}",
        f"  {est.model}",
        f"  parameters: {est.parameter_source}",
        f"  uncertainty: {est.uncertainty_rule}",
        *([f"  {est.relaxation.summary}"] if est.relaxation else []),
        "",
        "  cm-1 (model)    +/-   species  activity   origin",
    ]
    for line in est.lines:
        if line.origin == "acoustic" or (not internal and line.origin == "internal"):
            continue
        deg = f" (x{line.dimension})" if line.dimension > 1 else ""
        out.append(
            f"  {_wn(line.wavenumber_cm1)}  {line.uncertainty_cm1:7.1f}   {line.species + deg:<8} "
            f"{line.activity:<10} {line.label}"
        )
    out.append(f"  acoustic modes at {est.acoustic_max_cm1:.2g} cm-1 (checked: zero)")
    if est.bands and internal:
        out += ["", "  band splitting (model, cm-1): free value, site shift, factor-group splitting, components"]
        for b in est.bands:
            comps = ", ".join(f"{s} {w:.1f}" for s, w in b.components)
            measured = f" (gas {b.measured_free_cm1:g})" if b.measured_free_cm1 else ""
            out.append(
                f"  {b.unit} {b.band} ({b.free_species}) {b.free_cm1:.1f}{measured}: shift {b.site_shift_cm1:+.1f}, "
                f"splitting {b.splitting_cm1:.1f}: {comps}"
            )
    for w in est.warnings:
        out.append(f"  warning: {w}")
    out.append("  every number above is a model estimate, not a measurement")
    return "\n".join(out)


def band_cell(est: Estimate, unit: str, free_species: str) -> str:
    """Model positions of the bands of one free species of a unit, compact (table cells).

    ``"nu2 604.8-610.7"`` (lowest and highest component) per fundamental of that species,
    joined by ``"; "``; ``"-"`` when the estimate has none.
    """
    out = []
    for b in sorted(
        (b for b in est.bands if b.unit == unit and b.free_species == free_species), key=lambda b: b.free_cm1
    ):
        ws = [w for _, w in b.components]
        lo, hi = min(ws), max(ws)
        out.append(f"{b.band} {lo:.1f}" + (f"-{hi:.1f}" if hi - lo >= 0.05 else ""))
    return "; ".join(out) or "-"


def lattice_cell(est: Estimate, species: str | None = None) -> str:
    """Model wavenumbers (cm-1, whole numbers) of the lattice lines, of one species or all."""
    ws = [ln.wavenumber_cm1 for ln in est.lattice_lines() if species is None or ln.species == species]
    return ", ".join(f"{w:.0f}" for w in ws) or "-"
