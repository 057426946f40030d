"""The JSON Schema of dossier.json, shipped inside the package.

``dossier.schema.json`` (JSON Schema draft 2020-12) fixes the stable core of the format
described in docs/dossier-json.md: the keys a script may rely on, their types and the units
in their names. Objects may carry further keys. A change that removes, renames or retypes a
key of the schema raises ``schema_version`` (the schema's ``const`` and ``SCHEMA_VERSION`` in
dossier/analysis/common.py together).

    from dossier.schema import load_schema
    jsonschema.validate(json.load(open("dossier.json")), load_schema())
"""
from __future__ import annotations

import json
from importlib.resources import files

SCHEMA_FILE = "dossier.schema.json"


def load_schema() -> dict:
    """The schema of dossier.json as a dict (read from the installed package)."""
    return json.loads(files(__name__).joinpath(SCHEMA_FILE).read_text(encoding="utf-8"))
