"""The edge where numbers become words: unit systems, formatting, parsing clock times."""
