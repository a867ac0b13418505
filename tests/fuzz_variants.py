"""Families of systematic bad inputs for the fuzz corpus (tests/fuzz_corpus.py).

Where :func:`fuzz_corpus.mutate_text` damages a file at random, each family here walks one
kind of damage over every place it can go: files cut short, every number of a file replaced,
columns swapped, loops and tags given twice, text in other encodings or not text at all,
absurd counts, rows with a value too many or too few, bad values for every option of every
command, output paths that cannot be written and a standard output that is full or closed.
:func:`variants` yields them in a fixed order, so a case is replayed by its name.
"""

from __future__ import annotations

import re
from collections.abc import Iterator
from pathlib import Path

from fuzz_corpus import BAD_NUMBERS, PEAKS, ROOT, SPECTRA, STRUCTURES, TABLES, Case

CALCITE = str(ROOT / "structures" / "calcite.cif")
H2O = str(ROOT / "structures" / "molecules" / "h2o.xyz")
RAMAN = str(ROOT / "tests" / "data" / "spectra" / "invented_peaks_raman.csv")
_NUMBER = re.compile(r"(?<![A-Za-z_\d.])-?\d+(?:\.\d+)?(?:[eE][-+]?\d+)?(?:\(\d+\))?")


def _command_for(name: str, suffix: str) -> tuple[list[str], str | None]:
    """The command line that reads a damaged file ``{dir}/name`` (and its output, if any)."""
    path = f"{{dir}}/{name}"
    if suffix == ".xyz":
        return ["molecule", path], None
    if suffix == ".toml":
        return ["explain", CALCITE, "--peaks", RAMAN, "--modes", path], None
    if "peaks" in name:
        return ["explain", CALCITE, "--peaks", path], None
    if suffix in (".jdx", ".csv"):
        return ["explain", CALCITE, "--spectrum", path], None
    return ["predict", path], None


def _sources() -> list[Path]:
    """Every file kind the corpus damages: structures, a molecule, peak lists, spectra, mode tables."""
    return [*STRUCTURES, ROOT / "structures" / "molecules" / "h2o.xyz", *PEAKS, *SPECTRA, *TABLES]


def _case(family: str, label: str, src: Path, data: bytes, *, refuse: bool = False) -> Case:
    name = f"{family}{src.suffix}" if "peaks" not in src.name else f"{family}_peaks{src.suffix}"
    argv, output = _command_for(name, src.suffix)
    return Case(f"{family}-{src.name}-{label}", tuple(argv), {name: data}, output, refuse=refuse)


def truncated() -> Iterator[Case]:
    """Each file cut short at several points (a download or a copy that stopped)."""
    for src in _sources():
        data = src.read_bytes()
        for frac in (0.03, 0.15, 0.3, 0.5, 0.7, 0.9, 0.99):
            yield _case("cut", f"{int(frac * 100)}pct", src, data[: int(len(data) * frac)])


def every_number() -> Iterator[Case]:
    """Every number of a few files replaced in turn by a bad one (at most 40 places per file)."""
    picks = [
        ROOT / "structures" / n
        for n in ("calcite.cif", "calcite.vasp", "calcite.extxyz", "co2_Pa-3.cif", "nh4cl_ordered_P-43m.cif")
    ]
    picks += [ROOT / "structures" / "molecules" / "h2o.xyz", *PEAKS, *TABLES]
    for src in picks:
        text = src.read_text(encoding="utf-8")
        numbers = list(_NUMBER.finditer(text))
        step = max(1, len(numbers) // 40)
        for j, m in enumerate(numbers[::step][:40]):
            bad = BAD_NUMBERS[j % len(BAD_NUMBERS)]
            data = (text[: m.start()] + bad + text[m.end() :]).encode()
            yield _case("number", f"{j}-{bad or 'empty'}", src, data)


def _cif_loop_rows(text: str, tag: str) -> tuple[list[str], list[int]] | None:
    """The column names of the loop holding ``tag`` and the line numbers of its rows."""
    lines = text.splitlines()
    for i, line in enumerate(lines):
        if line.strip() == "loop_" and any(lines[k].strip() == tag for k in range(i + 1, min(i + 20, len(lines)))):
            k = i + 1
            names = []
            while k < len(lines) and lines[k].strip().startswith("_"):
                names.append(lines[k].strip())
                k += 1
            rows = []
            while k < len(lines) and lines[k].strip() and not lines[k].strip().startswith(("_", "loop_", "#")):
                rows.append(k)
                k += 1
            return names, rows
    return None


def swapped_columns() -> Iterator[Case]:
    """Two columns of an atom table (CIF loop, xyz rows, peak list) exchanged in every row."""
    for src in [p for p in STRUCTURES if p.suffix == ".cif"][:8]:
        text = src.read_text(encoding="utf-8")
        found = _cif_loop_rows(text, "_atom_site_fract_x")
        if not found:
            continue
        names, rows = found
        lines = text.splitlines()
        for a, b in sorted({(0, 1), (1, 2), (2, 3), (0, len(names) - 1)}):
            out = list(lines)
            for k in rows:
                cells = out[k].split()
                if len(cells) > max(a, b):
                    cells[a], cells[b] = cells[b], cells[a]
                    out[k] = " ".join(cells)
            yield _case("swap", f"{a}-{b}", src, ("\n".join(out) + "\n").encode())
    for src in (ROOT / "structures" / "calcite.extxyz", ROOT / "structures" / "molecules" / "h2o.xyz"):
        lines = src.read_text(encoding="utf-8").splitlines()
        for a, b in ((0, 1), (1, 3)):
            out = lines[:2]
            for line in lines[2:]:
                cells = line.split()
                cells[a], cells[b] = cells[b], cells[a]
                out.append(" ".join(cells))
            yield _case("swap", f"{a}-{b}", src, ("\n".join(out) + "\n").encode())
    for src in PEAKS:
        text = src.read_text(encoding="utf-8")
        sep = ";" if ";" in text else ("\t" if "\t" in text else ",")
        out = []
        for line in text.splitlines():
            cells = line.split(sep)
            if not line.startswith("#") and len(cells) > 1:
                cells[0], cells[1] = cells[1], cells[0]
            out.append(sep.join(cells))
        yield _case("swap", "0-1", src, ("\n".join(out) + "\n").encode())


def duplicates() -> Iterator[Case]:
    """A loop, a tag, a data block or a table given twice (with the same or a different value)."""
    for src in [p for p in STRUCTURES if p.suffix == ".cif"][:8]:
        text = src.read_text(encoding="utf-8")
        found = _cif_loop_rows(text, "_atom_site_fract_x")
        if found:
            names, rows = found
            lines = text.splitlines()
            start = rows[0] - len(names) - 1
            loop = lines[start : rows[-1] + 1]
            yield _case("dup", "atom-loop", src, ("\n".join([*lines, "", *loop]) + "\n").encode())
            yield _case("dup", "atom-row", src, ("\n".join([*lines, lines[rows[0]]]) + "\n").encode())
        m = re.search(r"^_cell_length_a\s+\S+", text, flags=re.M)
        if m:
            yield _case("dup", "cell-tag", src, (text + "\n_cell_length_a 99.0\n").encode())
        yield _case("dup", "data-block", src, (text + "\n" + text).encode())
    for src in TABLES:
        text = src.read_text(encoding="utf-8")
        yield _case("dup", "whole-table", src, (text + "\n" + text).encode())
        first = re.search(r"^\[[^\]]+\]$", text, flags=re.M)
        if first:
            yield _case("dup", "table-header", src, (text + "\n" + first.group(0) + "\n").encode())
    for src in PEAKS:
        lines = src.read_text(encoding="utf-8").splitlines()
        header = next((k for k, line in enumerate(lines) if not line.startswith("#")), 0)
        yield _case("dup", "header", src, ("\n".join([*lines, lines[header]]) + "\n").encode())


def encodings() -> Iterator[Case]:
    """Files that are not UTF-8 text: UTF-16, Latin-1, NUL bytes, binary, empty, only blanks."""
    picks = [
        ROOT / "structures" / n for n in ("calcite.cif", "calcite.vasp", "calcite.extxyz", "nh4cl_ordered_P-43m.cif")
    ]
    picks += [ROOT / "structures" / "molecules" / "h2o.xyz", *PEAKS, *SPECTRA, *TABLES]
    for src in picks:
        text = src.read_text(encoding="utf-8")
        latin = text.replace("#", "# café ", 1) if "#" in text else "é " + text
        forms = {
            "utf16": text.encode("utf-16"),
            "utf16be": text.encode("utf-16-be"),
            "latin1": latin.encode("latin-1", errors="replace"),
            "bom": b"\xef\xbb\xbf" + text.encode(),
            "nul": text.encode()[:40] + b"\x00" * 16 + text.encode()[40:],
            "binary": bytes(range(256)) * 8,
            "empty": b"",
            "blank": b"   \n\n\t\n",
        }
        for label, data in forms.items():
            # a Latin-1 comment in a CIF is read (CIF files of old databases have them); a byte-order
            # mark is UTF-8 all the same; every other form is not text a reader may take
            lenient = label == "bom" or (label == "latin1" and src.suffix == ".cif")
            yield _case("enc", label, src, data, refuse=not lenient)


def huge_counts() -> Iterator[Case]:
    """Count lines and point counts that claim absurd sizes (or are not counts)."""
    for src in (ROOT / "structures" / "calcite.extxyz", ROOT / "structures" / "molecules" / "h2o.xyz"):
        lines = src.read_text(encoding="utf-8").splitlines()
        for count in ("999999999999", "1000000", "31", "2", "0", "-1", "abc", "3.5", "1e3", ""):
            data = ("\n".join([count, *lines[1:]]) + "\n").encode()
            yield _case("count", count or "empty", src, data, refuse=True)
    for src in [p for p in SPECTRA if p.suffix == ".jdx"]:
        text = src.read_text(encoding="utf-8")
        for count in ("300000000", "1000000000000", "0", "-5", "x", "1e9"):
            data = re.sub(r"##NPOINTS=\d+", f"##NPOINTS={count}", text).encode()
            yield _case("count", f"npoints-{count}", src, data, refuse=True)
    for src in TABLES:
        depth = 3000
        nested = "a = " + "[" * depth + "]" * depth + "\n"
        yield _case("count", "nested-toml", src, (src.read_text(encoding="utf-8") + nested).encode(), refuse=True)
    rows = "\n".join(f"{100 + k * 0.05:.2f},1" for k in range(40_000))
    yield Case(
        "count-peaks-40000-rows",
        ("explain", CALCITE, "--peaks", "{dir}/many_peaks.csv"),
        {"many_peaks.csv": ("position (cm-1),intensity\n" + rows + "\n").encode()},
    )


def row_lengths() -> Iterator[Case]:
    """An xyz/extxyz row with a value too many or too few, at every row (must name the line)."""
    for src in (ROOT / "structures" / "calcite.extxyz", ROOT / "structures" / "molecules" / "h2o.xyz"):
        lines = src.read_text(encoding="utf-8").splitlines()
        for k in range(2, len(lines), 3 if len(lines) > 10 else 1):
            for label, row in (("extra", lines[k] + " 0.5"), ("short", lines[k].rsplit(maxsplit=1)[0])):
                out = [*lines[:k], row, *lines[k + 1 :]]
                yield _case("row", f"{label}-line{k + 1}", src, ("\n".join(out) + "\n").encode(), refuse=True)


#: each command, the arguments that make it runnable, and its numeric options
_COMMANDS: dict[str, tuple[list[str], list[str]]] = {
    "group": (["D4h"], []),
    "molecule": ([H2O], ["--tolerance", "--max-input-mb"]),
    "predict": (
        [CALCITE],
        ["--tolerance", "--unit-tolerance", "--bond-scale", "--max-atoms", "--max-input-mb", "--cutoff"],
    ),
    "compare": ([CALCITE, CALCITE], ["--tolerance", "--bond-scale", "--max-atoms"]),
    "lower": ([CALCITE], ["--max-index", "--window", "--tolerance"]),
    "explain": ([CALCITE, "--peaks", RAMAN], ["--window", "--tolerance", "--unit-tolerance"]),
    "draw": ([CALCITE, "-o", "{dir}/d.svg"], ["--tolerance", "--bond-scale"]),
    "report": ([CALCITE, "-o", "{dir}/r.html"], ["--tolerance"]),
    "screen": ([CALCITE, "-o", "{dir}/screen"], ["--workers", "--timeout", "--memory", "--part-size"]),
    "estimate": ([CALCITE], ["--cutoff", "--width", "--tolerance"]),
}
_OPTION_VALUES = ["nan", "inf", "-1", "0", "1e6", "1e300", "abc", "", "1,5", "1e-300"]
#: options that take text, with values that must be refused (or read) cleanly
_TEXT_OPTIONS = [
    ("predict", "--bond", ["C-O", "C-O=abc", "C-O=-1", "Xx-O=1.5", "=1", "C-O=nan"]),
    ("predict", "--free-group", ["CO3", "CO3=Q9", "=D3h", "Xyz=D3h"]),
    ("predict", "--units", ["Xyz", "", "CO3^9-"]),
    ("predict", "--state", ["?", "CO3=frozen", "a:b:c=d"]),
    ("predict", "--disorder", ["CO3=nonsense", "x:y"]),
    ("predict", "--rotor", ["Xyz", ""]),
    ("predict", "--charge", ["CO3=abc", "CO3", "CO3=nan", "Xx=1"]),
    ("predict", "--geometry", ["abc", "x(yz)x", ""]),
    ("predict", "--potential", ["nosuch"]),
    ("estimate", "--potential", ["epm2", "trappe"]),  # fitted to CO2 only: calcite refused
    ("estimate", "--charges", ["set"]),  # the default set has no charges of its own
    ("predict", "--format", ["pdf"]),
    ("group", "--to", ["", "C99", "-1"]),
    ("lower", "--observed", ["nu1:ir=abc", "nu9:raman=2", "nu1=2", "nu1:uv=1", "nu1:ir=-3"]),
    ("lower", "--modes", ["/nonexistent/m.toml", str(ROOT)]),
    ("lower", "--technique", ["uv"]),
    ("explain", "--technique", ["uv"]),
    ("draw", "--kind", ["pie"]),
    ("draw", "--band", ["nu9"]),
    ("draw", "--unit", ["Xyz"]),
    ("compare", "--labels", ["only-one", "a b c"]),
    ("screen", "--scheduler", ["nonsense", "tcp://256.0.0.1:1"]),
]


def options() -> Iterator[Case]:
    """Bad values of every numeric option of every command, and bad text for the text options."""
    for command, (args, numeric) in _COMMANDS.items():
        for option in numeric:
            for value in _OPTION_VALUES:
                yield Case(f"option-{command}{option}={value or 'empty'}", (command, *args, f"{option}={value}"))
        yield Case(f"option-{command}-unknown", (command, *args, "--no-such-option"))
    for command, option, values in _TEXT_OPTIONS:
        args = _COMMANDS[command][0]
        for value in values:
            yield Case(f"text-{command}{option}={value or 'empty'}", (command, *args, f"{option}={value}"))


def outputs() -> Iterator[Case]:
    """Output paths that are folders, on a read-only file system, too long, or under a missing folder."""
    targets = {
        "folder": "{dir}",
        "readonly": "/proc/splitting-out",
        "long": "{dir}/" + "x" * 300,
        "missing-parent": "{dir}/no/such/folder/out",
        "devfull": "/dev/full",
        "input": CALCITE,
    }
    commands = {
        "draw": (["draw", CALCITE, "-o"], ".svg"),
        "draw-pdf": (["draw", CALCITE, "-o"], ".pdf"),
        "report": (["report", CALCITE, "-o"], ".html"),
        "explain": (["explain", CALCITE, "--peaks", RAMAN, "-o"], ".svg"),
        "demo": (["demo", "--out"], ""),
        "screen": (["screen", H2O, "-o"], ""),
    }
    for cname, (argv, suffix) in commands.items():
        for tname, target in targets.items():
            if tname == "input" and cname != "draw":
                continue
            path = target + suffix if tname in ("long", "missing-parent", "readonly") else target
            yield Case(f"output-{cname}-{tname}", (*argv, path))


def streams() -> Iterator[Case]:
    """Standard output on /dev/full or closed, for the commands that print."""
    commands = {
        "version": ["--version"],
        "help": ["--help"],
        "command-help": ["predict", "--help"],
        "group": ["group", "Oh"],
        "group-json": ["group", "--json", "D4h"],
        "molecule": ["molecule", H2O],
        "predict": ["predict", CALCITE],
        "predict-json": ["predict", "--json", CALCITE],
        "lower": ["lower", CALCITE, "--max-index", "2"],
        "explain": ["explain", CALCITE, "--peaks", RAMAN],
        "draw": ["draw", CALCITE, "-o", "{dir}/kept.svg"],
    }
    for cname, argv in commands.items():
        for stream in ("full", "closed"):
            yield Case(f"stdout-{stream}-{cname}", tuple(argv), stdout=stream)


def special_files() -> Iterator[Case]:
    """Devices, a folder, a FIFO and a missing file where an input file is expected."""
    for path in ("/dev/zero", "/dev/urandom", "/dev/null", str(ROOT / "structures"), "{dir}/fifo", "/nonexistent"):
        label = Path(path).name or "root"
        files = {"fifo": b"<fifo>"} if path.endswith("fifo") else {}
        yield Case(f"special-predict-{label}", ("predict", path), files, refuse=True)
        yield Case(f"special-peaks-{label}", ("explain", CALCITE, "--peaks", path), files, refuse=True)
        yield Case(f"special-spectrum-{label}", ("explain", CALCITE, "--spectrum", path), files, refuse=True)
        yield Case(
            f"special-modes-{label}", ("explain", CALCITE, "--peaks", RAMAN, "--modes", path), files, refuse=True
        )


FAMILIES = (
    truncated,
    every_number,
    swapped_columns,
    duplicates,
    encodings,
    huge_counts,
    row_lengths,
    options,
    outputs,
    streams,
    special_files,
)


def variants() -> Iterator[Case]:
    """Every systematic case of every family, in a fixed order."""
    for family in FAMILIES:
        yield from family()
