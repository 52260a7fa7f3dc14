"""The web app's parts: page sections (sections), unit-aware inputs (widgets), plotly figures
(figures), the calls into the library (pipeline) and the words shown (text). app.py imports
them; none of them holds physics."""
