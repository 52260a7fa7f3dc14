"""The printable target card (pacing.io.target_card; written as PNG or PDF by pacing.io.exports):
sizes read back with Pillow (matplotlib's image dependency); a PDF file starts with "%PDF-"
(ISO 32000-1:2008, 7.5.2 File header)."""

from __future__ import annotations

import io

import numpy as np
import pytest
from PIL import Image
from test_io_exports import SAID, make_rows

from pacing.errors import InputError
from pacing.io.exports import CARD_DPI, target_card_pdf, target_card_png
from pacing.io.target_card import (
    CAUTION_LINE,
    RUNNING_CAUTION_LINE,
    TARGET_CARD,
    card_figure,
)


class TestCard:
    @pytest.mark.parametrize("count", [1, 6, 20, 21, 45])
    def test_png_has_the_documented_size(self, count):
        png = target_card_png(make_rows(count), title="Test loop")
        assert png[:8] == b"\x89PNG\r\n\x1a\n"  # PNG signature (ISO/IEC 15948, 5.2)
        width, height = TARGET_CARD.size(count)
        with Image.open(io.BytesIO(png)) as image:  # half a pixel rounds either way: ±1 px
            assert image.size == pytest.approx((width * CARD_DPI, height * CARD_DPI), abs=1)

    def test_a_joined_gap_is_printed_on_the_card_as_one_more_line(self):
        rows = make_rows(4)
        rows[2]["gap_length"] = 12_700.0
        figure = card_figure(rows, "metric", "x")
        texts = " ".join(t.get_text().replace("\n", " ") for t in figure.axes[0].texts)
        assert "joined gap 12.7 km" in texts and "segment 3" in texts
        png = target_card_png(rows, warnings=["W′ runs out"])
        width, height = TARGET_CARD.size(4, 2)  # the gap line and the warning
        with Image.open(io.BytesIO(png)) as image:  # 4.45 in · 150 dpi = 667.5 px: ±1 px
            assert image.size == pytest.approx((width * CARD_DPI, height * CARD_DPI), abs=1)
        figure = card_figure(make_rows(4), "metric", "x")
        assert "gap" not in " ".join(t.get_text() for t in figure.axes[0].texts)

    def test_more_segments_add_columns(self):
        assert TARGET_CARD.size(45)[0] == pytest.approx(3 * TARGET_CARD.size(5)[0])

    def test_pdf_starts_with_the_pdf_header(self):
        pdf = target_card_pdf(make_rows(running=True), "imperial", title="Test run")
        assert pdf.startswith(b"%PDF-")
        assert len(pdf) > 1000

    def test_card_is_not_blank(self):
        png = target_card_png(make_rows())
        with Image.open(io.BytesIO(png)) as image:
            grey = np.asarray(image.convert("L"), dtype=float)
        assert (grey < 100).mean() > 0.01  # dark ink on a white card

    def test_caution_line_is_printed(self):
        # the PDF text is compressed; check the figure's texts instead
        figure = card_figure(make_rows(), "metric", "x")
        texts = " ".join(t.get_text().replace("\n", " ") for t in figure.axes[0].texts)
        assert CAUTION_LINE in texts

    def test_a_running_card_speaks_of_running(self):
        figure = card_figure(make_rows(running=True), "metric", "x")
        texts = " ".join(t.get_text().replace("\n", " ") for t in figure.axes[0].texts)
        assert RUNNING_CAUTION_LINE in texts
        assert "Ride within" not in texts

    def test_no_segments_is_an_input_error(self):
        with pytest.raises(InputError):
            target_card_png([])


def test_the_card_grows_to_print_its_warnings():
    rows = make_rows()
    plain = Image.open(io.BytesIO(target_card_png(rows, dpi=50)))
    warned = Image.open(io.BytesIO(target_card_png(rows, dpi=50, warnings=SAID[:1])))
    assert warned.size[0] == plain.size[0]
    assert warned.size[1] == pytest.approx(plain.size[1] + 0.45 * 50, abs=1)


