"""Shared by the render, export, figure and build tests: a small project of real outputs.

The project names third-party output files (cclib's open test data, real NWChem, Gaussian and
Q-Chem runs of divinylbenzene) as the states of a pathway. The chemistry is not a real electron
transfer (the analysis' checks say so, with errors the report must show); what matters for the
renderers is that every number comes from real records through the real analysis.
"""
from __future__ import annotations

import json
from pathlib import Path

from conftest import fixture_path

HOSTILE_TITLE = "Fixture <script>alert('x')</script> & \"quotes\""
HOSTILE_NOTE = "<img src=x onerror=alert(1)> note"


def write_fixture_manifest(folder: Path, *, title: str = HOSTILE_TITLE) -> Path:
    nw = fixture_path("NWChem/basicNWChem7.0/dvb_gopt_ks.out").parent
    g16 = fixture_path("Gaussian/basicGaussian16/dvb_gopt.out").parent
    qc = fixture_path("QChem/basicQChem5.4/dvb_gopt.out").parent
    folder.mkdir(parents=True, exist_ok=True)
    text = f'''
[project]
title = {json.dumps(title)}
authors = ["A. N. Example"]
temperatures_k = [273.15, 298.15, 323.15]

[sites]
vinyl_a = [11, 12, 15, 16]
vinyl_b = [13, 14, 17, 18]

[states.min_a]
geometry = "{nw}/dvb_gopt_ks.out"
frequencies = "{nw}/dvb_ir.out"
excited_states = "{nw}/dvb_td.out"
note = {json.dumps(HOSTILE_NOTE)}

[states.ts]
role = "transition-state"
geometry = "{g16}/dvb_gopt.out"
frequencies = "{g16}/dvb_ir.out"
excited_states = "{g16}/dvb_td.out"

[states.min_b]
geometry = "{qc}/dvb_gopt.out"
frequencies = "{qc}/dvb_ir.out"

[[pathways]]
name = "a_to_b"
reactant = "min_a"
transition_state = "ts"
product = "min_b"
donor_site = "vinyl_a"
acceptor_site = "vinyl_b"

[[isomer_families]]
name = "three programs"
states = ["min_a", "min_b"]

[uncertainty]
samples = 2000

[[experiment.rates]]
pathway = "a_to_b"
temperature_k = 298.15
rate_per_s = 2.0e7
error_per_s = 0.5e7
method = "line broadening"
source = "invented for the test"
'''
    path = folder / "dossier.toml"
    path.write_text(text, encoding="utf-8")
    return path


def fixture_data(folder: Path) -> dict:
    """The dossier.json dict of the fixture project (reading + analysis + build additions)."""
    from dossier.analysis.assemble import analyse
    from dossier.report.build import complete_data
    from dossier.project import load_project

    project = load_project(write_fixture_manifest(folder), jobs=1)
    return complete_data(analyse(project), project)
