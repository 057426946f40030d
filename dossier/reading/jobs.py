"""Files that hold several jobs, split into one text per job before any parser sees them.

A log can hold more than one calculation: Gaussian's ``--Link1--`` job steps (each starts
with its own " Entering Link 1 = ..." line and copyright banner), ORCA's ``$new_job``
compound runs (each job after the input echo starts with a "$$$ JOB NUMBER n $$$" line),
and runs appended to one file (a second program banner). cclib reads such a file as one
job: the last job's charge with every job's energies in one list. Splitting the text first
gives each job its own record (``Source.job`` = 1, 2, ...; provenance ``path#job2``).

Markers are taken from the programs' outputs: Gaussian 16 prints " Entering Gaussian
System" and " Entering Link 1 = " at the start of a run and of every job step; ORCA 5/6
prints the "* O   R   C   A *" banner once per run and, for ``$new_job`` inputs,
"$$$$$$$$$$$$$$$$  JOB NUMBER  n $$$$$$$$$$$$$$" before each job.
"""
from __future__ import annotations

import re
from dataclasses import dataclass

#: A manifest or command line names one job of a file as FILE#jobN (N counts from 1).
JOB_SUFFIX = re.compile(r"^(?P<path>.+)#job(?P<n>[1-9][0-9]*)$")

_GAUSSIAN_RUN = re.compile(r"^ Entering Gaussian System", re.M)
_GAUSSIAN_STEP = re.compile(r"^ Entering Link 1 = ", re.M)
_ORCA_BANNER = re.compile(r"^[ \t]*\*[ \t]+O   R   C   A[ \t]+\*[ \t]*$", re.M)
_ORCA_JOB = re.compile(r"^[ \t]*\$+[ \t]+JOB NUMBER[ \t]+(\d+)[ \t]+\$+[ \t]*$", re.M)
_ORCA_INPUT = re.compile(r"^[ \t]*INPUT FILE[ \t]*$", re.M)
ORCA_NORMAL_END = "****ORCA TERMINATED NORMALLY****"


@dataclass
class JobText:
    number: int  # 1-based position in the file
    text: str  # what the parsers read
    #: a later job of the same ORCA compound run started, so this one ended normally (ORCA stops
    #: the whole run at the first failing job); its own text holds no termination line
    finished_by_next: bool = False


def split_name(name: str) -> tuple[str, int | None]:
    """'run.log#job2' -> ('run.log', 2); 'run.log' -> ('run.log', None)."""
    m = JOB_SUFFIX.match(name)
    return (m.group("path"), int(m.group("n"))) if m else (name, None)


def job_name(path: str, number: int) -> str:
    return f"{path}#job{number}"


def _line_start(text: str, pos: int) -> int:
    return text.rfind("\n", 0, pos) + 1


def _back_over_frame(text: str, pos: int, max_lines: int = 3) -> int:
    """Move a banner start up over the lines of asterisks (or blank lines) framing it."""
    for _ in range(max_lines):
        if pos == 0:
            break
        prev = _line_start(text, pos - 1)
        line = text[prev:pos - 1]
        if line.strip() and set(line.strip()) != {"*"}:
            break
        pos = prev
    return pos


def _gaussian_starts(text: str) -> list[int]:
    runs = [m.start() for m in _GAUSSIAN_RUN.finditer(text)]
    starts = list(runs)
    for m in _GAUSSIAN_STEP.finditer(text):
        # the step line a few lines below a run banner belongs to that run's start
        if not any(0 <= m.start() - r <= 600 for r in runs):
            starts.append(m.start())
    return sorted(starts)


def _orca_starts(text: str) -> tuple[list[int], set[int]]:
    """Job start offsets, and the subset that begin a new $new_job job of a running compound."""
    starts = [_back_over_frame(text, _line_start(text, m.start())) for m in _ORCA_BANNER.finditer(text)]
    compound = set()
    for m in _ORCA_JOB.finditer(text):
        if int(m.group(1)) > 1:
            starts.append(m.start())
            compound.add(m.start())
    return sorted(starts), compound


def _orca_header(text: str) -> str:
    """The run's banner up to its input echo: program and version for the later jobs of a compound run."""
    m = _ORCA_INPUT.search(text)
    return text[: _line_start(text, m.start())] if m else ""


def split_jobs(text: str, program: str) -> list[JobText]:
    """One JobText per job, in file order (a single-job file gives one, the whole text)."""
    compound: set[int] = set()
    if program == "Gaussian":
        starts = _gaussian_starts(text)
    elif program == "ORCA":
        starts, compound = _orca_starts(text)
    else:
        return [JobText(1, text)]
    # text before the first marker (a queue system's header) belongs to the first job
    starts = sorted({0, *[s for s in starts if s > 0 and text[:s].strip()]})
    if len(starts) <= 1:
        return [JobText(1, text)]
    bounds = starts + [len(text)]
    jobs = []
    run_head = ""
    for i, (a, b) in enumerate(zip(bounds, bounds[1:]), start=1):
        part = text[a:b]
        if a in compound:
            part = run_head + part  # ORCA prints the banner once per run: give every job its version line
        else:
            run_head = _orca_header(part) if program == "ORCA" else ""
        jobs.append(JobText(i, part, finished_by_next=b in compound))
    return jobs
