"""Specification of pacing.io.csv_dialect: the encoding, separator and decimal mark of a CSV
file sniffed as spreadsheets in many countries write them (common practice; UTF-16/32 byte-order
marks per the Unicode Standard, ch. 23.8), each read back into the same ride."""

from __future__ import annotations

import io

import pytest
from test_io_rides import N, assert_same_ride, canonical, one_line_refusal, spreadsheet_text

from pacing.errors import InputError
from pacing.io.csv_dialect import sniff_csv
from pacing.io.rides import read_ride, read_ride_csv


class TestCsvDialect:
    """Separator, decimal mark and encoding are sniffed; what cannot be read is refused in
    one line naming what was found. Byte-order marks: The Unicode Standard, section 23.8."""

    @pytest.mark.parametrize("separator, decimal, words", [
        (";", ",", "semicolon-separated, decimal comma"),
        ("\t", ",", "tab-separated, decimal comma"),
        ("\t", ".", "tab-separated, decimal point"),
        ("|", ".", "vertical bar-separated, decimal point"),
        (",", ".", "comma-separated, decimal point"),
    ])
    def test_separator_and_decimal_mark(self, separator, decimal, words):
        data = spreadsheet_text(canonical(), separator, decimal).encode()
        assert_same_ride(read_ride_csv(data), canonical())
        assert sniff_csv(data)[1].describe.startswith(words)

    def test_quoted_decimal_commas_in_a_comma_separated_file(self):
        columns = canonical()
        lines = [",".join(columns)] + [",".join(f'"{float(v)!r}"'.replace(".", ",")
                                                for v in row)
                                       for row in zip(*columns.values(), strict=True)]
        assert_same_ride(read_ride_csv(("\n".join(lines) + "\n").encode()), columns)

    def test_a_first_line_naming_the_separator(self):
        # "sep=;" on the first line: what spreadsheets read as the separator (common practice)
        data = ("sep=;\r\n" + spreadsheet_text(canonical(), ";", ".")).encode()
        assert_same_ride(read_ride_csv(data), canonical())
        assert sniff_csv(data)[1].separator == ";"

    def test_columns_separated_by_runs_of_spaces(self):
        text = spreadsheet_text(canonical(), " ", ".").replace(" ", "   ")
        assert_same_ride(read_ride_csv(text.encode()), canonical())

    @pytest.mark.parametrize("encoding, mark", [
        ("utf-8", b"\xef\xbb\xbf"),
        ("utf-16-le", b"\xff\xfe"),
        ("utf-16-be", b"\xfe\xff"),
        ("utf-32-le", b"\xff\xfe\x00\x00"),
    ])
    def test_byte_order_marks(self, encoding, mark):
        data = mark + spreadsheet_text(canonical()).encode(encoding)
        ride = read_ride_csv(data)
        assert_same_ride(ride, canonical())
        # a byte-order mark does not stick to the first column's name
        assert read_ride(io.BytesIO(data)).time.size == N

    def test_windows_1252_text(self):
        columns = {**canonical(), "temperature °C": [18.5] * N}
        data = spreadsheet_text(columns).encode("cp1252")
        with pytest.raises(UnicodeDecodeError):
            data.decode("utf-8")
        assert_same_ride(read_ride_csv(data), canonical())

    def test_header_only_and_a_single_row_are_one_line(self, tmp_path):
        one_line_refusal(b"time_s,speed_mps,power_w\n",
                         r"has a header \(time_s, speed_mps, power_w\) but no data rows")
        one_line_refusal(b"timestamp;speed;power\r\n", "but no data rows")
        one_line_refusal(b"time_s,speed_mps,power_w\n0,9,200\n",
                         "a single data row: a test ride needs at least 10 samples")
        path = tmp_path / "header.csv"
        path.write_bytes(b"\xef\xbb\xbftime_s;speed_mps;power_w\r\n")
        with pytest.raises(InputError, match="no data rows"):
            read_ride(path)

    def test_what_cannot_be_read_is_named(self):
        one_line_refusal(b"time\n1\n2\n", "cannot tell the columns apart: the header 'time'")
        one_line_refusal(b"a;b\n1,5;2.5\n" * 3, "mixes decimal commas and points "
                                                 r"\(e.g. '1,5' and '2.5'\)")
        # a FIT file (binary; its header carries ".FIT" at bytes 8-11, FIT protocol from memory)
        one_line_refusal(bytes([14, 16, 0, 0, 0, 0, 0, 0]) + b".FIT" + bytes(20), "FIT file")
        one_line_refusal(b"time_s,speed\x00\x00,power", "binary data")
        one_line_refusal(b"\xff\xfe" + b"\x00\xd8" * 8, "UTF-16 byte-order mark but does not "
                                                          "decode")
        one_line_refusal(b"\n\n  \n", "empty")

    def test_a_missing_column_names_the_dialect_read(self):
        data = spreadsheet_text({"time_s": [0.0, 1.0], "speed_mps": [9.0, 9.0]}).encode()
        one_line_refusal(data, r"the file has: time_s, speed_mps \(semicolon-separated, "
                               r"decimal comma, UTF-8\)")
