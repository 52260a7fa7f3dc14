"""The dialect of a CSV file, sniffed from its text as spreadsheets in many countries write it
(`sniff_csv`): encoding, separator and decimal mark. pacing.io.rides reads rides and race files
with it.

The dialect is sniffed from the text (`sniff_csv`), as spreadsheets in many countries write it:
the encoding from a byte-order mark (UTF-8, UTF-16 or UTF-32), else UTF-8, else Windows-1252;
the separator (comma, semicolon, tab or vertical bar; runs of spaces as a last resort) as named
by a first line "sep=;", else as the one that splits the header and the first rows into the
same number of columns; the decimal mark (a comma, as in "12,5", when the numbers carry commas
and no points). A file that cannot be read (binary data such as a FIT file, one column only,
mixed decimal marks, a header without data rows) is refused with one line naming what was
found.
"""

from __future__ import annotations

import codecs
import csv
import io
import re
from dataclasses import dataclass

from pacing.errors import InputError, first_line

SEPARATORS = {",": "comma", ";": "semicolon", "\t": "tab", "|": "vertical bar"}
"""Column separators tried, with their names for messages (spaces are a last resort)."""

SNIFF_LINES = 50
"""Lines (the header and the first data rows) read to sniff the dialect."""

BYTE_ORDER_MARKS = ((codecs.BOM_UTF32_LE, "utf-32"), (codecs.BOM_UTF32_BE, "utf-32"),
                    (codecs.BOM_UTF8, "utf-8-sig"), (codecs.BOM_UTF16_LE, "utf-16"),
                    (codecs.BOM_UTF16_BE, "utf-16"))
"""Byte-order marks and their codecs (UTF-32 first: its little-endian mark starts like
UTF-16's). Unicode Standard, section 23.8 "Specials: byte order mark"."""

_SEPARATOR_HINT = re.compile(r"^\s*sep=([,;\t|])\s*$")
_DECIMAL_COMMA = re.compile(r"^[+-]?\d*,\d+$")
_DECIMAL_POINT = re.compile(r"^[+-]?\d*\.\d+(?:[eE][+-]?\d+)?$")


@dataclass(frozen=True)
class CsvDialect:
    """How a CSV file is written.

    Attributes
    ----------
    encoding : str
        Codec the text was decoded with ("utf-8", "utf-8-sig", "utf-16", "utf-32",
        "cp1252").
    separator : str
        Column separator ("," ";" tab "|", or the regular expression ``\\s+`` for runs of
        spaces).
    decimal : str
        Decimal mark, "." or ",".
    """

    encoding: str
    separator: str
    decimal: str

    @property
    def describe(self) -> str:
        """The dialect in words, e.g. "semicolon-separated, decimal comma, UTF-16"."""
        separator = SEPARATORS.get(self.separator, "space")
        mark = "decimal comma" if self.decimal == "," else "decimal point"
        return f"{separator}-separated, {mark}, {self.encoding.upper().replace('-SIG', '')}"


def _decode(data: bytes) -> tuple[str, str]:
    """(text, codec): by byte-order mark, else UTF-8, else Windows-1252; a one-line
    InputError for binary data (a FIT file named)."""
    for mark, codec in BYTE_ORDER_MARKS:
        if data.startswith(mark):
            try:
                return data.decode(codec), codec
            except UnicodeDecodeError as error:
                raise InputError(f"the CSV file starts with a {codec.upper()} byte-order mark "
                                 f"but does not decode as {codec.upper()}: "
                                 f"{first_line(error)}") from None
    if len(data) >= 12 and data[8:12] == b".FIT":
        raise InputError("this is a FIT file (binary), not CSV text: export the ride as CSV or "
                         "GPX from the device's software")
    head = data[:4096]
    if b"\0" in head:
        raise InputError("the file holds binary data (NUL bytes), not CSV text; UTF-16 text "
                         "needs a byte-order mark")
    try:
        return data.decode("utf-8"), "utf-8"
    except UnicodeDecodeError:
        return data.decode("cp1252", errors="replace"), "cp1252"


def _sniff_lines(text: str) -> list[str]:
    """The first SNIFF_LINES non-empty lines of the text."""
    lines = []
    for line in io.StringIO(text, newline=None):
        if line.strip():
            lines.append(line.rstrip("\r\n"))
            if len(lines) == SNIFF_LINES:
                break
    return lines


def _split(lines: list[str], separator: str) -> list[list[str]]:
    """The lines split into cells (quotes honoured; runs of spaces for ``\\s+``)."""
    if separator == r"\s+":
        return [line.split() for line in lines]
    return [[cell.strip() for cell in row]
            for row in csv.reader(lines, delimiter=separator, skipinitialspace=True)]


def _separator(lines: list[str]) -> str:
    """The separator that splits the header into the most columns (at least two) with the
    data rows agreeing; spaces only when no other separator splits the header."""
    best: tuple[float, int, str] | None = None
    for separator in (*SEPARATORS, r"\s+"):
        if separator == r"\s+" and best is not None:
            break
        try:
            rows = _split(lines, separator)
        except csv.Error:  # quotes that do not close on their line
            continue
        columns = len(rows[0])
        if columns < 2:
            continue
        data = rows[1:]
        agree = sum(len(row) == columns for row in data) / len(data) if data else 1.0
        score = (agree, columns, separator)
        if best is None or score[:2] > best[:2]:
            best = score
    if best is None:
        header = lines[0][:60]
        raise InputError(f"cannot tell the columns apart: the header {header!r} has no comma, "
                         "semicolon or tab; a test ride needs at least time, speed and power "
                         "columns")
    return best[2]


def _decimal(rows: list[list[str]]) -> str:
    """"," when the numbers are written with decimal commas ("12,5", quoted in a
    comma-separated file) and none with points, else "."; refuses a mix of both."""
    cells = [cell for row in rows[1:] for cell in row]
    commas = [cell for cell in cells if _DECIMAL_COMMA.match(cell)]
    points = [cell for cell in cells if _DECIMAL_POINT.match(cell)]
    if commas and points:
        raise InputError(f"the CSV file mixes decimal commas and points (e.g. {commas[0]!r} "
                         f"and {points[0]!r}): save it with one decimal mark")
    return "," if commas else "."


def sniff_csv(data: bytes) -> tuple[str, CsvDialect]:
    """The text of a CSV file and how it is written (module docstring).

    Parameters
    ----------
    data : bytes
        The file's bytes.

    Returns
    -------
    tuple
        (text without byte-order mark, CsvDialect).

    Raises
    ------
    InputError
        For an empty or binary file, or a header that no separator splits; one line naming
        what was found.
    """
    text, codec = _decode(data)
    text = text.lstrip("\ufeff")
    lines = _sniff_lines(text)
    hint = _SEPARATOR_HINT.match(lines[0]) if lines else None
    if hint:
        # a spreadsheet's first line "sep=;" names the separator (common practice)
        text = text[text.index(lines[0]) + len(lines[0]):].lstrip("\r\n")
        lines = lines[1:]
    if not lines:
        raise InputError("the CSV file is empty")
    separator = hint.group(1) if hint else _separator(lines)
    try:
        decimal = _decimal(_split(lines, separator))
    except csv.Error as error:
        raise InputError(f"the CSV file does not parse: {first_line(error)}") from None
    return text, CsvDialect(codec, separator, decimal)
