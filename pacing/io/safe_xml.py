"""Parse XML from users' files safely: the one place where pacing reads untrusted XML.

defusedxml refuses document type declarations (DTDs), entity declarations and external
references, which shuts out entity-expansion ("billion laughs") and external-entity attacks
before any other parser sees the text. Used by pacing.io.gpx (before gpxpy) and
pacing.io.rides (test rides from GPX).

References
----------
defusedxml documentation, https://pypi.org/project/defusedxml/ (forbid_dtd,
forbid_entities, forbid_external).
"""

from __future__ import annotations

from xml.etree.ElementTree import Element

import defusedxml
import defusedxml.ElementTree

from pacing.errors import InputError


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
