"""The project stage: manifest → bound project. It validates the manifest (one line naming the
manifest line and the reason for every error), binds each state, site and pathway to the records
of the files it names, runs the physics-aware checks on the bound project, and drafts manifests
for `dossier init`. It may import the shared vocabulary (dossier.units, errors, records),
dossier.science and dossier.reading; never dossier.analysis, dossier.report, dossier.archive or
the commands.
"""
