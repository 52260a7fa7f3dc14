"""Parse XML from users' files safely: the one place where pacing reads untrusted XML.

defusedxml refuses document type declarations (DTDs), entity declarations and external
references, which shuts out entity-expansion ("billion laughs") and external-entity attacks
before any other parser sees the text. Used by pacing.io.gpx (before gpxpy) and
pacing.io.rides (test rides from GPX).

`walk_xml` reads a document as a stream of elements (iterparse), so a file can be checked with
bounded memory and refused at the first fault: nesting deeper than MAX_XML_DEPTH included.

References
----------
defusedxml documentation, https://pypi.org/project/defusedxml/ (forbid_dtd,
forbid_entities, forbid_external).
"""

from __future__ import annotations

import io
from collections.abc import Iterator
from xml.etree.ElementTree import Element

import defusedxml
import defusedxml.ElementTree

from pacing.errors import InputError

MAX_XML_DEPTH = 64
"""Deepest element nesting accepted [-]: a GPX point sits at depth 4 to 6 (gpx, trk, trkseg,
trkpt, extensions and their children); hundreds of levels only serve to choke a parser."""


def parse_xml(data: bytes, what: str = "GPX file") -> Element:
    """The root element of the XML document `data`, parsed with DTDs, entities and external
    references refused.

    Raises InputError (one line) when the document declares a DTD or entities, or does not
    parse.

    Parameters
    ----------
    data : bytes
        The document's bytes; its encoding declaration is honoured [-].
    what : str, optional
        How the file is named in error messages, e.g. "GPX file" [-].

    Returns
    -------
    xml.etree.ElementTree.Element
        The document's root.

    References
    ----------
    defusedxml documentation, https://pypi.org/project/defusedxml/.

    Examples
    --------
    >>> parse_xml(b'<gpx version="1.1"><trk/></gpx>').tag
    'gpx'
    """
    try:
        return defusedxml.ElementTree.fromstring(
            data, forbid_dtd=True, forbid_entities=True, forbid_external=True)
    except defusedxml.DefusedXmlException:
        raise InputError(f"{what} declares a DTD or entities; such files are refused "
                         "for safety") from None
    except Exception as error:  # xml.etree.ElementTree.ParseError and decoding errors
        raise InputError(f"not a {what}: the XML does not parse ({error})") from None


def local_name(tag: str) -> str:
    """An element's tag without its namespace.

    Parameters
    ----------
    tag : str
        The tag as ElementTree gives it, "{namespace}name" or "name" [-].

    Returns
    -------
    str
        The name alone.

    Examples
    --------
    >>> local_name("{http://www.topografix.com/GPX/1/1}trkpt")
    'trkpt'
    """
    return tag.rsplit("}", 1)[-1]


def walk_xml(data: bytes, what: str = "GPX file",
             max_depth: int = MAX_XML_DEPTH) -> Iterator[tuple[str, Element, int]]:
    """The document's elements as a stream: ("start" or "end", element, depth), DTDs, entities
    and external references refused.

    An element's children are complete at its "end" event; the caller may then clear it, so a
    long document is checked with bounded memory. Raises InputError (one line) for a DTD or
    entities, XML that does not parse, or nesting deeper than `max_depth`.

    Parameters
    ----------
    data : bytes
        The document's bytes; its encoding declaration is honoured [-].
    what : str, optional
        How the file is named in error messages, e.g. "GPX file" [-].
    max_depth : int, optional
        Deepest nesting accepted, the root at depth 1 [-].

    Returns
    -------
    iterator of (str, xml.etree.ElementTree.Element, int)
        Event, element and its depth (root 1), in document order.

    References
    ----------
    defusedxml documentation, https://pypi.org/project/defusedxml/ (iterparse).

    Examples
    --------
    >>> [(event, element.tag, depth) for event, element, depth
    ...  in walk_xml(b'<gpx><trk/></gpx>')]
    [('start', 'gpx', 1), ('start', 'trk', 2), ('end', 'trk', 2), ('end', 'gpx', 1)]
    """
    depth = 0
    try:
        for event, element in defusedxml.ElementTree.iterparse(
                io.BytesIO(data), events=("start", "end"), forbid_dtd=True,
                forbid_entities=True, forbid_external=True):
            if event == "start":
                depth += 1
                if depth > max_depth:
                    raise InputError(f"not a {what}: elements nested more than {max_depth} "
                                     "deep")
                yield event, element, depth
            else:
                yield event, element, depth
                depth -= 1
    except InputError:
        raise
    except defusedxml.DefusedXmlException:
        raise InputError(f"{what} declares a DTD or entities; such files are refused "
                         "for safety") from None
    except Exception as error:  # xml.etree.ElementTree.ParseError and decoding errors
        raise InputError(f"not a {what}: the XML does not parse ({_one_line(error)})") from None


def _one_line(error: BaseException) -> str:
    """The error's message on one line, at most 200 characters."""
    text = " ".join(str(error).split())
    return text if len(text) <= 200 else text[:197] + "..."
