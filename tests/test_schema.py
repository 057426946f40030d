"""dossier.json against the JSON Schema shipped in the package (dossier/schema/dossier.schema.json).

Outside reference: the `jsonschema` package from the package index, which implements JSON
Schema draft 2020-12 (its meta-schema checks our schema; its validator checks the demo's file).
"""
from __future__ import annotations

import copy
import json

import pytest

from conftest import DEMO
from dossier.errors import DossierError
from dossier.schema import load_schema

jsonschema = pytest.importorskip("jsonschema")


@pytest.fixture(scope="module")
def validator():
    schema = load_schema()
    jsonschema.Draft202012Validator.check_schema(schema)  # the schema itself is valid draft 2020-12
    return jsonschema.Draft202012Validator(schema)


@pytest.fixture(scope="module")
def demo_json(tmp_path_factory):
    """The demo study's dossier.json as `dossier build` writes it (JSON only)."""
    from dossier.report import build

    manifest = DEMO / "dossier.toml"
    if not manifest.exists():
        pytest.skip("demo study manifest example_outputs/dossier.toml not present")
    try:
        result = build.build_dossier(manifest, tmp_path_factory.mktemp("schema") / "demo", formats=("json",))
    except DossierError as exc:
        pytest.skip(f"the demo study does not build: {exc}")
    return json.loads(result.files["dossier.json"].read_text(encoding="utf-8"))


def _errors(validator, data) -> list[str]:
    return [f"{'/'.join(map(str, e.absolute_path))}: {e.message}" for e in validator.iter_errors(data)]


@pytest.mark.slow
def test_demo_dossier_json_is_valid(validator, demo_json):
    assert _errors(validator, demo_json) == []
    # the schema is not vacuous on the demo: it has pathways with rates and states with thermochemistry
    assert demo_json["pathways"] and demo_json["pathways"][0]["rates"]
    assert all(st["thermo"] for st in demo_json["states"])


@pytest.mark.slow
def test_schema_rejects_breaking_changes_and_accepts_new_keys(validator, demo_json):
    def broken(change) -> list[str]:
        data = copy.deepcopy(demo_json)
        change(data)
        return _errors(validator, data)

    pw = lambda d: d["pathways"][0]  # noqa: E731
    # a renamed key (the unit dropped from its name) is a breaking change
    assert broken(lambda d: pw(d).update(barrier=pw(d).pop("barrier_kj_mol")))
    # a retyped value
    assert broken(lambda d: pw(d).update(coupling_cm1="1983 cm-1"))
    assert broken(lambda d: d["states"][0]["thermo"][0].update(gibbs_correction_hartree=None))
    # a removed block, a bad hash, an unknown enum value, a rate interval that is not a pair
    assert broken(lambda d: d.pop("sources"))
    assert broken(lambda d: d["sources"][0].update(sha256="not-a-hash"))
    assert broken(lambda d: d["project"].update(standard_state="2M"))
    assert broken(lambda d: pw(d)["rates"][0].update(log10_rate_interval_68=[1.0]))
    assert broken(lambda d: d.update(schema_version=0))
    # additions are not breaking: new keys anywhere validate
    assert not broken(lambda d: (d.update(draft=True), pw(d).update(a_new_block={"model": "marcus"}),
                                 pw(d)["rates"][0].update(a_new_detail={"valid": True})))
    # every rate says where its model holds, and each pathway what it quotes (issue 12)
    assert broken(lambda d: pw(d)["rates"][0].pop("validity"))
    assert broken(lambda d: pw(d)["rates"][0].update(validity={"valid": True}))
    assert broken(lambda d: pw(d).pop("headline_rate"))
