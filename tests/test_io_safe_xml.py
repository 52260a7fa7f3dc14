"""Specification of pacing.io.safe_xml: untrusted XML is parsed with DTDs, entities and
external references refused (defusedxml), and every failure is a one-line InputError.

The attacks are the classic ones defusedxml's documentation lists (entity expansion, "billion
laughs"; external entities); their use on GPX files is specified in tests/test_io_gpx.py.
"""

from __future__ import annotations

import pytest

from pacing.errors import InputError
from pacing.io.safe_xml import local_name, parse_xml

BILLION_LAUGHS = (b'<?xml version="1.0"?><!DOCTYPE lolz [<!ENTITY lol "lol">'
                  b'<!ENTITY lol2 "&lol;&lol;&lol;&lol;&lol;&lol;&lol;&lol;&lol;&lol;">]>'
                  b'<gpx>&lol2;</gpx>')
EXTERNAL_ENTITY = (b'<?xml version="1.0"?><!DOCTYPE gpx [<!ENTITY secret SYSTEM '
                   b'"file:///etc/passwd">]><gpx>&secret;</gpx>')


def test_a_plain_document_gives_its_root_with_namespaces_kept():
    root = parse_xml(b'<gpx xmlns="http://www.topografix.com/GPX/1/1"><trk/></gpx>')
    assert root.tag == "{http://www.topografix.com/GPX/1/1}gpx"
    assert [local_name(child.tag) for child in root] == ["trk"]


def test_the_encoding_declaration_is_honoured():
    data = '<?xml version="1.0" encoding="ISO-8859-1"?><gpx><name>Côte</name></gpx>'
    root = parse_xml(data.encode("latin-1"))
    assert root.find("name").text == "Côte"


@pytest.mark.parametrize("data", [
    BILLION_LAUGHS,
    EXTERNAL_ENTITY,
    b'<?xml version="1.0"?><!DOCTYPE gpx><gpx/>',
])
def test_dtds_and_entities_are_refused(data):
    with pytest.raises(InputError, match="declares a DTD or entities") as error:
        parse_xml(data, "GPX file")
    assert "\n" not in str(error.value)


@pytest.mark.parametrize("data", [b"", b"<gpx>", b"not xml at all", b"<a></b>"])
def test_text_that_does_not_parse_is_one_line_input_error(data):
    with pytest.raises(InputError, match="not a ride file: the XML does not parse") as error:
        parse_xml(data, "ride file")
    assert "\n" not in str(error.value)


def test_local_name_drops_the_namespace_only():
    assert local_name("{http://www.topografix.com/GPX/1/1}trkpt") == "trkpt"
    assert local_name("trkpt") == "trkpt"
