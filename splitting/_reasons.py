"""What a library's exception means, said in the terms of the user's input.

The readers underneath (tomllib, gemmi, ase, the JCAMP-DX reader, numpy, pyarrow, spglib,
tblite, Dask) word their failures for programmers: ``could not convert string to float``,
``Expected '=' after a key in a key/value pair (at line 3, column 5)``, ``(AssertionError)``.
Their text never reaches a message. The functions here turn an exception into a few words
about the input (which line, which value, what is wrong); a failure they do not recognise
becomes the caller's ``default``, never the library's own words.

Examples
--------
>>> reason(ValueError("could not convert string to float: 'abc'"), "the file does not follow the format")
"'abc' is not a number"
>>> reason(AssertionError(), "the file does not follow the format")
'the file does not follow the format'
"""

from __future__ import annotations

import re

__all__ = ["decode_text", "jcamp_reason", "reason", "toml_reason"]

#: Python's and numpy's wording of a failed conversion, and what it means for the value
_CONVERSIONS = (
    (re.compile(r"could not convert string to float: (.*)"), "{0} is not a number"),
    (re.compile(r"invalid literal for int\(\) with base \d+: (.*)"), "{0} is not a whole number"),
    (re.compile(r"could not convert string '(.*)' to float"), "'{0}' is not a number"),
    (re.compile(r"could not convert string to int: (.*)"), "{0} is not a whole number"),
)

#: tomllib's messages (their start) and what they mean for the line of the mode table
_TOML = (
    ("Expected '=' after a key", "a key must be followed by '= value'"),
    ("Invalid value", "a value that is neither a number, a quoted string, true/false, a [list] nor a {table}"),
    ("Cannot overwrite a value", "a key given twice"),
    ("Cannot declare", "a table or key given twice"),
    ("Cannot mutate", "a table or key given twice"),
    ("Unterminated string", "a string whose closing quote is missing"),
    ("Invalid statement", "a line that is neither 'key = value' nor a [table] header"),
    ("Illegal character '\\n'", "a string whose closing quote is missing on its line"),
    ("Illegal character", "a character that is not allowed in a string (a control character)"),
    ("Unclosed array", "a '[' list that is not closed"),
    ("Unclosed inline table", "a '{' table that is not closed"),
    ("Unclosed table", "a '[' table header that is not closed"),
    ("Invalid initial character for a key part", "a key that starts with a character a key may not start with"),
    ("Expected newline or end of document", "more than one statement on a line"),
    ("Expected ']' at the end of", "a table header without its closing ']'"),
    ("Invalid date or datetime", "a date or time that is not valid"),
    ("Invalid hex value", "a \\u escape that is not valid"),
    ("Unescaped '\\' in a string", "a backslash in a string that starts no escape"),
    ("Found invalid character", "a character that is not allowed here"),
    ("TOML document is recursing too deeply", "lists or tables nested too deeply"),
    ("Invalid", "a value or key that is not valid TOML"),
)
_TOML_WHERE = re.compile(r"\(at line (\d+), column (\d+)\)|\(at end of document\)")


def reason(exc: BaseException, default: str) -> str:
    """A few words on what ``exc`` says about the input, or ``default`` when it says nothing usable.

    Only failures whose meaning is known are translated (failed number conversions, a value
    too many or too few, text that is not UTF-8); anything else gives ``default``.
    """
    if isinstance(exc, UnicodeDecodeError):
        return f"byte {exc.start + 1} is not UTF-8 text; save the file as UTF-8"
    if isinstance(exc, RecursionError):
        return "it is nested too deeply"
    if isinstance(exc, MemoryError):
        return "it asks for more memory than there is"
    text = " ".join(str(exc).split())
    for pattern, words in _CONVERSIONS:
        m = pattern.search(text)
        if m:
            return words.format(m.group(1))
    m = re.search(r"could not broadcast input array from shape \((\d*),?\) into shape \((\d+),?\)", text)
    if m:
        return f"a line holds {m.group(1) or 0} values where {m.group(2)} are needed"
    if re.search(r"too many values to unpack|not enough values to unpack|could not assign tuple of length", text):
        return "a line has a value too many or too few"
    return default


def toml_reason(exc: BaseException) -> str:
    """Where a TOML file is broken and how, from a ``tomllib.TOMLDecodeError``: ``line 3: ...``.

    >>> import tomllib
    >>> try:
    ...     tomllib.loads("a = 1\\nname\\n")
    ... except tomllib.TOMLDecodeError as exc:
    ...     print(toml_reason(exc))
    line 2: a key must be followed by '= value'
    """
    text = " ".join(str(exc).split())
    what = next((words for start, words in _TOML if text.startswith(start)), "the text does not follow TOML syntax")
    m = _TOML_WHERE.search(text)
    if m is None:
        return what
    return f"line {m.group(1)}: {what}" if m.group(1) else f"at the end of the file: {what}"


def decode_text(data: bytes, where: str, *, lenient: bool = False) -> str:
    """``data`` as text (UTF-8, with or without a byte-order mark), else an InputError naming ``where``.

    UTF-16 and binary data are always refused; with ``lenient``, other bytes that are not UTF-8
    (a Latin-1 name in a comment) are read as replacement characters instead.

    >>> decode_text("a,b\\n".encode("utf-16"), "peaks.csv")
    Traceback (most recent call last):
    ...
    splitting.errors.InputError: peaks.csv: the file is UTF-16 text; save it as UTF-8
    """
    from .errors import InputError

    nul_pairs = len(data) > 3 and b"\0\0" in (data[1:4:2], data[0:3:2])  # ASCII text as UTF-16, no mark
    if data.startswith((b"\xff\xfe", b"\xfe\xff")) or nul_pairs:
        raise InputError(f"{where}: the file is UTF-16 text; save it as UTF-8")
    if b"\0" in data[:65536]:
        raise InputError(f"{where}: a binary file, not text")
    try:
        return data.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        if lenient:
            return data.decode("utf-8-sig", errors="replace")
        line = data[: exc.start].count(b"\n") + 1
        raise InputError(
            f"{where}, line {line}: not UTF-8 text (byte {exc.start + 1}); save the file as UTF-8"
        ) from None


_JCAMP_CHECKS = (
    (
        re.compile(r"X-Check failed\. Expected value is (\S+) but (\S+) has been calculated"),
        "a data line starts at x = {0}, but the lines before it lead to x = {1} (the x check): "
        "a line is missing, doubled or damaged",
    ),
    (
        re.compile(r"Y-Check failed\. Last value of previous line is (\S+) but first value is (\S+?)\.?$"),
        "a data line starts with y = {1}, but the line before it ends with y = {0} (the y check): a line is damaged",
    ),
    (
        re.compile(r"Mismatch of array lengths found: len\(x\) is (\d+) and len\(y\) (\d+)"),
        "the data give {0} x values but {1} y values",
    ),
)


def jcamp_reason(said: str) -> str:
    """The JCAMP-DX reader's complaint about the data lines, in the file's terms.

    >>> jcamp_reason("Mismatch of array lengths found: len(x) is 251 and len(y) 250.")
    'the data give 251 x values but 250 y values'
    """
    for pattern, words in _JCAMP_CHECKS:
        m = pattern.search(said)
        if m:
            return words.format(*(_g(v) for v in m.groups()))
    return "the data lines do not agree with the header or with each other"


def _g(text: str) -> str:
    """A number as a person writes it (700, not 700.0); anything else as it is."""
    try:
        return f"{float(text):g}"
    except ValueError:
        return text
