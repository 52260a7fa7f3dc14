"""Specification of pacing.io.safe_xml: untrusted XML is parsed with DTDs, entities and
external references refused (defusedxml), and every failure is a one-line InputError.

The attacks are the classic ones defusedxml's documentation lists (entity expansion, "billion
laughs"; external entities); their use on GPX files is specified in tests/test_io_gpx.py.
"""

from __future__ import annotations

import pytest

from pacing.errors import InputError
from pacing.io.safe_xml import MAX_XML_DEPTH, local_name, parse_xml, walk_xml

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


# ------------------------------------------------------------------------- streaming walk

def test_walk_gives_start_and_end_events_with_depths():
    events = [(event, local_name(element.tag), depth) for event, element, depth
              in walk_xml(b'<gpx xmlns="http://www.topografix.com/GPX/1/1"><trk><name>a'
                          b'</name></trk></gpx>')]
    assert events == [("start", "gpx", 1), ("start", "trk", 2), ("start", "name", 3),
                      ("end", "name", 3), ("end", "trk", 2), ("end", "gpx", 1)]


@pytest.mark.parametrize("data", [BILLION_LAUGHS, EXTERNAL_ENTITY,
                                  b'<?xml version="1.0"?><!DOCTYPE gpx><gpx/>'])
def test_the_walk_refuses_dtds_and_entities(data):
    with pytest.raises(InputError, match="declares a DTD or entities"):
        list(walk_xml(data))


def test_the_walk_refuses_deep_nesting_at_the_first_level_too_deep():
    assert MAX_XML_DEPTH == 64
    deep = b"<gpx>" + b"<a>" * 63 + b"</a>" * 63 + b"</gpx>"
    assert max(depth for _, _, depth in walk_xml(deep)) == 64
    deeper = b"<gpx>" + b"<a>" * 64 + b"</a>" * 64 + b"</gpx>"
    with pytest.raises(InputError, match="nested more than 64 deep"):
        list(walk_xml(deeper))


@pytest.mark.parametrize("data", [b"", b"<gpx>", b"not xml at all", b"<a></b>"])
def test_a_walk_over_text_that_does_not_parse_ends_in_one_line(data):
    with pytest.raises(InputError, match="not a ride file: the XML does not parse") as error:
        list(walk_xml(data, "ride file"))
    assert "\n" not in str(error.value)
