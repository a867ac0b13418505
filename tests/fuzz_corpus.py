"""A generator of bad inputs: mutated structure files, peak lists, spectra, mode tables and options.

Each case is a command line plus the files it needs; :func:`corpus` yields them from a seed,
so a failing case is replayed by its number. ``tests/test_fuzz.py`` runs a bounded slice of it
(and hypothesis-driven mutations) in CI; ``benchmarks/bench_fuzz_corpus.py`` runs the whole
corpus as separate processes and records how long it takes. The contract checked on every
case: no traceback, an exit status of :data:`splitting.errors.EXIT_CODES` other than the
internal-error one, at most one ``error:`` line, no partial output file, bounded time.
"""

from __future__ import annotations

import random
import re
from collections.abc import Iterator
from dataclasses import dataclass, field
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
STRUCTURES = sorted(
    p
    for p in (ROOT / "structures").glob("*")
    if p.suffix in (".cif", ".vasp", ".extxyz") and p.stat().st_size < 40_000 and "c60" not in p.name
)
PEAKS = sorted((ROOT / "tests" / "data" / "spectra").glob("*peaks*"))
SPECTRA = [
    *sorted((ROOT / "tests" / "data" / "spectra").glob("*spectrum*.csv")),
    *sorted((ROOT / "tests" / "data" / "spectra").glob("*.jdx")),
]
TABLES = [ROOT / "splitting" / "data" / "units" / n for n in ("carbonate.toml", "ammonium.toml")]

#: numbers that break naive readers
BAD_NUMBERS = ["nan", "inf", "-inf", "1e308", "-1e308", "1e-300", "-1", "0", "?", ".", "abc", "1e999", "", "--1"]
#: values given to numeric options
BAD_OPTION_VALUES = ["nan", "inf", "-inf", "-1", "0", "1e6", "1e300", "abc", "", "1,5", "0x10"]
NUMERIC_OPTIONS = [
    ("predict", "--tolerance"),
    ("predict", "--unit-tolerance"),
    ("predict", "--bond-scale"),
    ("predict", "--max-atoms"),
    ("molecule", "--tolerance"),
    ("explain", "--window"),
    ("lower", "--max-index"),
    ("estimate", "--cutoff"),
]
_NUMBER = re.compile(r"(?<![A-Za-z_])-?\d+\.\d+(?:\(\d+\))?")


@dataclass(frozen=True)
class Case:
    """One generated bad input: what to run and the files to write first."""

    name: str
    argv: tuple[str, ...]
    files: dict[str, bytes] = field(default_factory=dict)
    output: str | None = None  # an output file the command must write whole or not at all

    def materialise(self, folder: Path) -> list[str]:
        """Write the case's files into ``folder`` and return the command line with paths filled in."""
        for name, data in self.files.items():
            (folder / name).write_bytes(data)
        return [a.replace("{dir}", str(folder)) for a in self.argv]


def mutate_text(text: str, rng: random.Random) -> str:
    """One random damage: a number replaced, a line dropped, doubled, cut, or garbage inserted."""
    lines = text.splitlines(keepends=True) or [""]
    kind = rng.randrange(7)
    i = rng.randrange(len(lines))
    if kind == 0:
        numbers = list(_NUMBER.finditer(text))
        if numbers:
            m = rng.choice(numbers)
            return text[: m.start()] + rng.choice(BAD_NUMBERS) + text[m.end() :]
    if kind == 1:
        del lines[i]
    elif kind == 2:
        lines.insert(i, lines[i])
    elif kind == 3:
        lines[i] = lines[i][: rng.randrange(len(lines[i]) + 1)]
    elif kind == 4:
        lines.insert(
            i, "".join(rng.choice("#[]{}=,;\"'\\\t xyz0123456789.-") for _ in range(rng.randrange(1, 40))) + "\n"
        )
    elif kind == 5:
        return text[: rng.randrange(len(text) + 1)]  # cut short
    else:
        lines[i] = lines[i].replace(" ", "  " + rng.choice(BAD_NUMBERS) + " ", 1)
    return "".join(lines)


def mutate_bytes(data: bytes, rng: random.Random) -> bytes:
    """Flip a few bytes (binary damage, invalid UTF-8)."""
    buf = bytearray(data)
    for _ in range(rng.randrange(1, 6)):
        if buf:
            buf[rng.randrange(len(buf))] = rng.randrange(256)
    return bytes(buf)


def _structure_case(k: int, rng: random.Random) -> Case:
    src = rng.choice(STRUCTURES)
    text = src.read_text(encoding="utf-8")
    data = mutate_bytes(text.encode(), rng) if rng.random() < 0.2 else mutate_text(text, rng).encode()
    name = f"s{k}{src.suffix}"
    command = rng.choice(["predict", "predict", "predict --json", "draw"])
    argv = [*command.split(), f"{{dir}}/{name}"]
    output = None
    if command == "draw":
        output = f"s{k}.svg"
        argv += ["-o", f"{{dir}}/{output}"]
    return Case(f"structure-{k}-{src.name}", tuple(argv), {name: data}, output)


def _peaks_case(k: int, rng: random.Random) -> Case:
    src = rng.choice(PEAKS)
    data = mutate_text(src.read_text(encoding="utf-8"), rng).encode()
    name = f"p{k}{src.suffix}"
    argv = ["explain", str(ROOT / "structures" / "calcite.cif"), "--peaks", f"{{dir}}/{name}"]
    return Case(f"peaks-{k}-{src.name}", tuple(argv), {name: data})


def _spectrum_case(k: int, rng: random.Random) -> Case:
    src = rng.choice(SPECTRA)
    data = mutate_text(src.read_text(encoding="utf-8"), rng).encode()
    name = f"sp{k}{src.suffix}"
    argv = ["explain", str(ROOT / "structures" / "calcite.cif"), "--spectrum", f"{{dir}}/{name}"]
    return Case(f"spectrum-{k}-{src.name}", tuple(argv), {name: data})


def _table_case(k: int, rng: random.Random) -> Case:
    src = rng.choice(TABLES)
    data = mutate_text(src.read_text(encoding="utf-8"), rng).encode()
    peaks = ROOT / "tests" / "data" / "spectra" / "invented_peaks_raman.csv"
    argv = ["explain", str(ROOT / "structures" / "calcite.cif"), "--peaks", str(peaks), "--modes", f"{{dir}}/m{k}.toml"]
    return Case(f"modes-{k}-{src.name}", tuple(argv), {f"m{k}.toml": data})


def _option_case(k: int, rng: random.Random) -> Case:
    command, option = rng.choice(NUMERIC_OPTIONS)
    target = ROOT / "structures" / ("molecules/h2o.xyz" if command == "molecule" else "calcite.cif")
    argv = [command, str(target), f"{option}={rng.choice(BAD_OPTION_VALUES)}"]
    if command == "explain":
        argv += ["--peaks", str(PEAKS[0])]
    return Case(f"option-{k}-{command}{option}", tuple(argv))


_KINDS = (_structure_case, _structure_case, _peaks_case, _spectrum_case, _table_case, _option_case)


def corpus(size: int = 1200, *, seed: int = 10) -> Iterator[Case]:
    """``size`` generated cases, the same for the same seed."""
    for k in range(size):
        rng = random.Random(seed * 1_000_003 + k)
        yield _KINDS[k % len(_KINDS)](k, rng)
