"""The bundled scenario: a made-up lab prepares and then interprets a low-temperature run.

The (fictional) Harbour Bay cryo-spectroscopy group will cool a solid C60 film from room
temperature to 90 K, through the orientational ordering transition, and record infrared and
Raman spectra on the way. Before the run they want the predicted pattern of every band in both
phases, the lattice modes, what must change at the transition, and the candidate ordered phases
their line counts would point to; after the run, an assignment of every line of their 90 K
spectra. The 90 K peak lists shipped with the demo are INVENTED for this scenario; they are not
measurements.
"""

from __future__ import annotations

import json
from dataclasses import dataclass
from importlib import resources
from pathlib import Path

from ._io import atomic_folder, atomic_write_text
from .errors import DataError

__all__ = ["SCENARIO", "DemoOutputs", "run_demo"]

SCENARIO = (
    "Harbour Bay cryo-spectroscopy group (a made-up lab): solid C60, cooled from 300 K to 90 K through the "
    "orientational ordering transition; infrared and Raman at both temperatures. The 90 K peak lists are "
    "INVENTED for this demo and are not measurements."
)


@dataclass(frozen=True)
class DemoOutputs:
    """Where the demo wrote its results."""

    folder: Path
    files: tuple[Path, ...]

    def to_dict(self) -> dict[str, object]:
        """JSON-ready form."""
        return {"folder": str(self.folder), "files": [str(f) for f in self.files]}


def _structures() -> Path:
    here = Path(__file__).resolve().parents[1] / "structures"
    if not (here / "c60_ordered_Pa-3.cif").exists():
        raise DataError(f"the bundled structures are not at {here}; run the demo from a checkout of the project")
    return here


def _data(name: str) -> Path:
    return Path(str(resources.files("splitting") / "data" / "demo" / name))


def run_demo(out: str | Path = "demo-output") -> DemoOutputs:
    """Run the whole scenario and write report, figures, tables and JSON to ``out``.

    The files are written into a temporary folder beside ``out`` and moved into place
    together: after a failure (a full disk, say) there is no half-filled folder.  An
    existing ``out`` is replaced only when it is empty or an earlier demo wrote it.

    Raises
    ------
    OutputError
        ``out`` is a file, a folder of other files, or cannot be written.
    """
    target = Path(out)
    with atomic_folder(target) as tmp:
        written = _run_demo_into(tmp)
    return DemoOutputs(target.resolve(), tuple(target / p.name for p in written))


def _run_demo_into(folder: Path) -> list[Path]:
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    from .crystal.predict import Options
    from .phases.compare import compare_phases
    from .phases.lower import lower
    from .plot.correlation import correlation_diagram, phase_correlation_diagram
    from .plot.explain import explain_files
    from .plot.lines import line_pattern, write_figure
    from .report.html import write_report
    from .report.tables import correlation_table, species_table
    from .report.text import explanation_text, lowering_text, prediction_text, sequence_text
    from .spectra.catalogue import find_table
    from .spectra.counting import count_components
    from .spectra.measured import read_peaks

    written: list[Path] = []

    def save_text(name: str, text: str) -> None:
        written.append(atomic_write_text(folder / name, text))

    def save_json(name: str, payload: dict) -> None:
        save_text(name, json.dumps(payload, indent=2, ensure_ascii=False) + "\n")

    def save_fig(name: str, fig) -> None:
        for suffix in (".svg", ".png"):
            written.append(write_figure(fig, folder / f"{name}{suffix}"))
        plt.close(fig)

    s = _structures()
    warm, cold, model = s / "c60_fcc_Fm-3m_disordered.cif", s / "c60_ordered_Pa-3.cif", s / "c60_fcc_Fm-3.cif"
    opts = Options()
    labels = ["300 K", "90 K"]
    # 1. before the run: both phases, what changes
    # the warm fcc phase is the rotor (plastic) phase, the cold one ordered
    seq = compare_phases([warm, cold], labels, opts, phase_states=[{"*": "rotor"}, {"*": "ordered"}])
    save_text("phases.txt", sequence_text(seq))
    save_json("phases.json", seq.to_dict())
    cold_pred = seq.phases[1].crystal
    warm_model = seq.phases[0].crystal
    save_text("prediction_90K.txt", prediction_text(cold_pred))
    save_json("prediction_90K.json", cold_pred.to_dict())
    for fmt, suffix in (("markdown", "md"), ("latex", "tex"), ("csv", "csv")):
        save_text(f"species_90K.{suffix}", species_table(cold_pred, fmt))
        save_text(f"correlation_90K.{suffix}", correlation_table(cold_pred, "C60", fmt))
    table = find_table("C60")
    art = correlation_diagram(cold_pred, "C60")
    save_fig("correlation_C60_90K", art.figure)
    art = correlation_diagram(cold_pred, "C60", band="T1u")
    save_fig("correlation_C60_T1u_90K", art.figure)
    pairs = [("300 K (rotor phase; drawn: one-orientation model)", warm_model), ("90 K (ordered)", cold_pred)]
    art = phase_correlation_diagram(pairs, "C60", band="T1u")
    save_fig("phases_C60_T1u", art.figure)
    art = line_pattern(pairs, "C60", modes=table)
    save_fig("lines_C60", art.figure)
    # 2. which ordered phase would the line counts point to?
    ir_peaks = _data("c60_90K_ir_peaks.csv")
    raman_peaks = _data("c60_90K_raman_peaks.csv")

    def typical(peaks: Path, species: str) -> int:
        """The number of components most bands of one species show (window 15 cm-1)."""
        modes = [m for m in table.modes if m.species == species]
        counts = [n for n in count_components(read_peaks(peaks), modes, window_cm1=15.0).values() if n]
        return max(set(counts), key=counts.count)

    raman_list = read_peaks(raman_peaks)
    observed = (
        ("T1u", "ir", typical(ir_peaks, "T1u")),
        ("Ag", "raman", typical(raman_peaks, "Ag")),
        ("lattice", "raman", sum(1 for p in raman_list.peaks if p.position_cm1 < 100)),
    )
    ranking = lower(model, opts, observed=observed)
    save_text("candidates.txt", lowering_text(ranking))
    save_json("candidates.json", ranking.to_dict())
    # 3. after the run: assign the (invented) 90 K lines
    explained = []
    for tech, peaks in (("ir", ir_peaks), ("raman", raman_peaks)):
        fig_path = folder / f"assignment_90K_{tech}.svg"
        result = explain_files(cold, peaks, technique=tech, figure=fig_path, options=opts)
        written.append(fig_path)
        save_text(f"assignment_90K_{tech}.txt", explanation_text(result))
        save_json(f"assignment_90K_{tech}.json", result.to_dict())
        explained.append(result)
    notes = [
        SCENARIO,
        "Before the run: the tables below give every band's components in both phases; on cooling the T1u "
        "lines should each split into three infrared components and five Raman-active librations should "
        "appear below ~40 cm-1.",
        f"Candidate ordered phases from the one-orientation fcc model, ranked by the invented 90 K infrared "
        f"counts: best {ranking.candidates[0].symbol} (see candidates.txt).",
        "After the run: "
        + "; ".join(
            f"{r.technique}: {len(r.lines) - len(r.unexplained)} of {len(r.lines)} lines explained" for r in explained
        ),
        "Cryogens, class 3B/4 lasers and pressure cells are hazardous: follow your local rules (docs/safety.md).",
    ]
    warm_units = seq.phases[0].disorder.units if seq.phases[0].disorder else ()
    notes[1:1] = [
        f"300 K phase (rotor phase, state given): {u.statement} Free-unit lines: "
        + "; ".join(f"{st}: {ir} IR / {ra} Raman" for st, ir, ra in u.readings if st == "dynamic")
        + "."
        for u in warm_units
    ] + ["90 K phase: ordered (factor-group components, sharp librations)."]
    report = folder / "report.html"
    write_report(
        report,
        [("300 K (rotor phase; one-orientation model shown)", warm_model), ("90 K (ordered)", cold_pred)],
        title="Harbour Bay C60 cooling run (demo scenario; invented data)",
        notes=notes,
        modes={"C60": table},
        explanations=explained,
        lowering=ranking,
        states=[seq.phases[0].state, seq.phases[1].state],
    )
    written.append(report)
    return written
