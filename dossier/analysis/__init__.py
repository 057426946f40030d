"""The analysis stage: bound project → result dict (the content of dossier.json, docs/dossier-json.md).

It owns every decision about what the dossier says: which parameter routes are preferred, which
rate models are evaluated and where each holds, the method ladder, the comparison with
experiment, and the report choices (reference temperature, population scheme, cited works,
quoted rate), made once here so that the report stage only lays them out. It calls the pure
physics of dossier.science on data taken from the bound project and returns plain JSON types.
It may import the shared vocabulary (dossier.units, errors, records), dossier.science,
dossier.reading and dossier.project; never dossier.report, dossier.archive or the commands.
"""
from dossier.analysis.assemble import analyse, to_json_types
from dossier.analysis.common import MODELS

__all__ = ["analyse", "to_json_types", "MODELS"]
