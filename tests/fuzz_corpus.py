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
    stdout: str = "pipe"  # "pipe", "full" (/dev/full) or "closed": where standard output goes
    refuse: bool = False  # the input is broken beyond reading: an answer (exit 0) is a silent misreading

    def materialise(self, folder: Path) -> list[str]:
        """Write the case's files into ``folder`` and return the command line with paths filled in."""
        import os

        for name, data in self.files.items():
            if data == FIFO:
                os.mkfifo(folder / name)
            else:
                (folder / name).write_bytes(data)
        return [a.replace("{dir}", str(folder)) for a in self.argv]


#: the content of a file that is to be made a FIFO (named pipe) instead
FIFO = b"<fifo>"

#: words of Python and of the libraries underneath that must never reach a message: the user is told
#: what is wrong with which input in the terms of the input, not in the terms of a library
LIBRARY_PHRASES = (
    "Traceback",
    "could not convert string to float",
    "invalid literal for int()",
    "Error:",  # "ValueError: ...", "AssertionError: ..."
    "Error)",
    "Error(",
    "(AssertionError",
    "Expected '=' after a key",
    "Invalid value (at line",
    "Invalid statement",
    "Illegal character",
    "Unclosed array",
    "Cannot declare",
    "Cannot overwrite a value",
    "Unterminated string",
    "Invalid initial character",
    "(at line ",  # tomllib's position suffix
    "codec can't",
    "invalid start byte",
    "invalid continuation byte",
    "unexpected end of data",
    "list index out of range",
    "index out of range",
    "out of bounds for axis",
    "NoneType",
    "object has no attribute",
    "unsupported operand",
    "not enough values to unpack",
    "too many values to unpack",
    "unhashable type",
    "SVD did not converge",
    "could not broadcast",
    "operands could not be broadcast",
    "maximum recursion depth",
    "positional argument",
    "unexpected keyword argument",
    "[Errno",
    "SCF not converged",
    "spglib",
    "gemmi",
    "tblite",
    "tomllib",
    "pyarrow",
    "numpy",
    "ase.io",
    "dask",
    "Parquet magic bytes",
    "Spacegroup search failed",
    "too close distance",
    "internal error",
)
#: unit spellings that are not the trade's (Å and cm-1 in plain text)
UNIT_SPELLINGS = re.compile(
    r"(?:\d|\bat most|\babove) A\b(?![-=])|(?<![_\w])[Aa]ngstroms?\b|cm\^-1|cm\*\*-1|\b1/cm\b|cm⁻¹"
)

#: what a run can end in, from worst to best (the benchmark counts each)
OUTCOMES = (
    "hang",
    "traceback",
    "internal error",
    "not one line",
    "partial file",
    "raw text",
    "unit spelling",
    "silently read",
    "clean error",
    "ok",
)


def judge(case: Case, code: int, out: str, err: str, folder: Path) -> str:
    """The outcome of one finished run of ``case`` (one of :data:`OUTCOMES` but ``hang``).

    ``silently read``: an answer to an input that cannot be read as it is (a row with a value
    too many, a count that is not the file's, text that is not UTF-8, a device).
    """
    from splitting.errors import EXIT_CODES

    if "Traceback" in err:
        return "traceback"
    if code not in EXIT_CODES or code == 70:
        return "internal error"
    lines = err.splitlines()
    if code != 0 and not (len(lines) == 1 and err.startswith("error: ") and err.endswith("\n")):
        return "not one line"
    if code != 0 and out:
        return "not one line"  # an error with output on standard output besides
    if case.stdout != "pipe" and code != 6:
        return "not one line"  # the output was lost: that must be said (exit 6), not passed over
    leftovers = [p for p in folder.rglob("*") if p.name.endswith(".part") or ".tmp" in p.name]
    if leftovers or (case.output and code != 0 and (folder / case.output).exists()):
        return "partial file"
    if any(phrase in err for phrase in LIBRARY_PHRASES):
        return "raw text"
    said = re.sub(r"'[^'\n]*'", "''", err)  # text quoted from the user's own input is theirs
    if UNIT_SPELLINGS.search(said) or re.search(r"(?<![_\w])angstrom|cm\^-1", out, flags=re.I):
        return "unit spelling"
    if code == 0 and case.refuse:
        return "silently read"
    return "ok" if code == 0 else "clean error"


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

#: random cases in the whole corpus (besides the systematic families of tests/fuzz_variants.py)
RANDOM_CASES = 240


def corpus(size: int = 1200, *, seed: int = 10) -> Iterator[Case]:
    """``size`` randomly damaged cases, the same for the same seed."""
    for k in range(size):
        rng = random.Random(seed * 1_000_003 + k)
        yield _KINDS[k % len(_KINDS)](k, rng)


def whole_corpus(*, seed: int = 10) -> list[Case]:
    """The whole corpus: every systematic variant, then :data:`RANDOM_CASES` random ones."""
    from fuzz_variants import variants

    return [*variants(), *corpus(RANDOM_CASES, seed=seed)]


def spread_slice(cases: list[Case], size: int) -> list[Case]:
    """``size`` cases spread evenly over ``cases`` (so every family is sampled)."""
    if size >= len(cases):
        return list(cases)
    return [cases[round(k * (len(cases) - 1) / (size - 1))] for k in range(size)]


def run_process(case: Case, folder: Path, *, timeout: float, code_root: Path = ROOT) -> tuple[int, str, str] | None:
    """Run ``case`` as a separate process in its own session; ``None`` when it ran out of time.

    A case that runs out of time is killed with every process it started (its session's
    process group). ``code_root`` is the checkout whose ``splitting`` is run.
    """
    import os
    import signal
    import subprocess
    import sys

    argv = case.materialise(folder)
    command = [sys.executable, "-m", "splitting", *argv]
    if case.stdout == "closed":
        command = ["sh", "-c", 'exec "$@" >&-', "sh", *command]
    env = {**os.environ, "PYTHONPATH": str(code_root)}
    env.pop("SPLITTING_DEBUG", None)
    full = open("/dev/full", "w") if case.stdout == "full" else None
    try:
        proc = subprocess.Popen(
            command,
            stdin=subprocess.DEVNULL,
            stdout=full if full is not None else subprocess.PIPE,
            stderr=subprocess.PIPE,
            cwd=folder,
            env=env,
            start_new_session=True,
        )
        try:
            out, err = proc.communicate(timeout=timeout)
        except subprocess.TimeoutExpired:
            os.killpg(proc.pid, signal.SIGKILL)
            proc.communicate()
            return None
    finally:
        if full is not None:
            full.close()
    decode = lambda b: (b or b"").decode("utf-8", errors="replace")  # noqa: E731
    return proc.returncode, decode(out), decode(err)
