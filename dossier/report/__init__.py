"""The report stage: result dict → figures, HTML/PDF pages and exports (JSON, CSV, XYZ, LaTeX,
BibTeX), written atomically into the dossier folder by build.py.

It lays out what the analysis decided (data["report"]: temperature, population scheme, quoted
rates, cited works) and never recomputes a decision or re-reads an output file. It may import the
shared vocabulary, dossier.science (units and formatting helpers), dossier.project (to load the
manifest in build.py) and dossier.analysis; never dossier.archive or the commands.
"""
