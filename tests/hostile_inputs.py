"""Shared by the hostile-input tests (tests/test_hostile_reading.py, tests/test_hostile_outputs.py):
real third-party logs copied, joined or cut in tmp_path, two small projects, and a deadline.

The logs are real outputs (../shared/fixtures/qc-logs, cclib's open test data); the fixture
folder is never modified. Expected energies are the numbers the logs print themselves.
"""
from __future__ import annotations

import random
import re
import signal
from contextlib import contextmanager

import pytest

from conftest import ROOT, fixture_path

SEED = 16
ROOT_TEMPLATES = ROOT / "templates"

G_OPT = "Gaussian/basicGaussian16/dvb_gopt.out"
G_CATION = "Gaussian/basicGaussian16/dvb_un_sp.log"
O_FREQ = "ORCA/basicORCA5.0/dvb_ir.out"
O_CATION = "ORCA/basicORCA5.0/dvb_sp_un.out"
# Printed by the logs themselves: dvb_gopt.out last "SCF Done:  E(RB3LYP) =  -382.308266602";
# dvb_un_sp.log "SCF Done:  E(UB3LYP) =  -382.081392720"; ORCA dvb_sp_un.out
# "FINAL SINGLE POINT ENERGY      -381.831981252254" (the SCF part of the cation).
G_OPT_E = -382.308266602
G_CATION_E = -382.081392720


@contextmanager
def deadline(seconds: int):
    """Fail instead of hanging (a FIFO opened for reading blocks until a writer comes)."""
    def fire(*_):
        raise TimeoutError(f"no answer within {seconds} s")

    old = signal.signal(signal.SIGALRM, fire)
    signal.alarm(seconds)
    try:
        yield
    finally:
        signal.alarm(0)
        signal.signal(signal.SIGALRM, old)


def log_text(rel: str) -> str:
    return fixture_path(rel).read_text(encoding="utf-8")


def link1_log(tmp_path):
    first, second = log_text(G_OPT), log_text(G_CATION)
    step = second.index(" Entering Link 1 = ")  # a Link1 job step starts at its own "Entering Link 1"
    log = tmp_path / "opt_then_cation.log"
    log.write_text(first + " Link1:  Proceeding to internal job step number  2.\n" + second[step:])
    return log


def orca_compound_log(tmp_path):
    """An ORCA compound run as ORCA writes one: the whole input echoed once (the two jobs
    separated by $new_job), then each job after its JOB NUMBER line; made of two real runs."""
    end = "****END OF INPUT****"
    head, body1 = log_text(O_FREQ).split(end, 1)
    body1 = body1.split("****ORCA TERMINATED NORMALLY****")[0]
    head2, body2 = log_text(O_CATION).split(end, 1)
    echo = re.compile(r"^\|\s*\d+>")
    n = sum(1 for line in head.splitlines() if echo.match(line))
    second = [line for line in head2.splitlines() if echo.match(line)]
    extra = [f"|{n + 1:3d}> $new_job"] + [echo.sub(f"|{n + 2 + i:3d}>", line) for i, line in enumerate(second)]
    head = head.rstrip(" ") + "\n".join(extra) + "\n                         "

    def banner(k):
        return f"\n                         $$$$$$$$$$$$$$$$  JOB NUMBER  {k} $$$$$$$$$$$$$$\n"

    log = tmp_path / "compound.out"
    log.write_text(head + end + "\n" + banner(1) + body1 + banner(2) + body2)
    return log


NWCHEM = "NWChem/basicNWChem7.0"
SMALL_MANIFEST = """\
[project]
title = "Hostile-input test: divinylbenzene"

[states.dvb]
geometry = "runs/dvb_gopt_ks.out"
frequencies = "runs/dvb_ir.out"
"""


@pytest.fixture(scope="module")
def small(tmp_path_factory):
    """A two-file project (real NWChem 7.0 outputs, their inputs beside them) and a JSON-only build."""
    from dossier.report.build import build_dossier

    root = tmp_path_factory.mktemp("hostile-project")
    runs = root / "study" / "runs"
    runs.mkdir(parents=True)
    for name in ("dvb_gopt_ks.out", "dvb_gopt_ks.in", "dvb_ir.out"):
        runs.joinpath(name).write_bytes(fixture_path(f"{NWCHEM}/{name}").read_bytes())
    manifest = root / "study" / "dossier.toml"
    manifest.write_text(SMALL_MANIFEST)
    build = root / "built"
    build_dossier(manifest, build, formats=("json",), jobs=1, use_cache=False)
    return {"root": root, "manifest": manifest, "runs": runs, "build": build}


def no_build(*_a, **_k):
    raise AssertionError("built although the output path is refused")



@pytest.fixture(scope="module")
def cut_build(tmp_path_factory):
    """A pathway whose transition-state optimisation was killed by the queue (the Gaussian dvb
    optimisation cut at a seeded point between its 2nd and last SCF cycle), built in every text format."""
    from dossier.report.build import build_dossier

    root = tmp_path_factory.mktemp("cut-project")
    text = log_text(G_OPT)
    rng = random.Random(SEED)
    first = text.index("SCF Done")
    cut = rng.randrange(text.index("SCF Done", first + 1), text.rindex("SCF Done"))
    (root / "ts_opt.log").write_text(text[:cut])
    nw = fixture_path("NWChem/basicNWChem7.0/dvb_gopt_ks.out").parent
    qc = fixture_path("QChem/basicQChem5.4/dvb_gopt.out").parent
    (root / "dossier.toml").write_text(f'''
[project]
title = "cut-off transition state"
[sites]
vinyl_a = [11, 12, 15, 16]
vinyl_b = [13, 14, 17, 18]
[states."=cmd|' /C calc'!A0"]
geometry = "{nw}/dvb_gopt_ks.out"
frequencies = "{nw}/dvb_ir.out"
[states.ts]
role = "transition-state"
geometry = "ts_opt.log"
[states."-1 anion"]
geometry = "{qc}/dvb_gopt.out"
frequencies = "{qc}/dvb_ir.out"
[[pathways]]
name = "+SUM(A1:A9)"
reactant = "=cmd|' /C calc'!A0"
transition_state = "ts"
product = "-1 anion"
donor_site = "vinyl_a"
acceptor_site = "vinyl_b"
''')
    # the cut-off run is a check error: a draft build is the one that writes it out
    result = build_dossier(root / "dossier.toml", root / "out", formats=("json", "xyz", "csv", "tex", "bib", "html"),
                           jobs=1, use_cache=False, draft=True)
    return result
