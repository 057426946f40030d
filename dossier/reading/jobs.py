"""Files that hold several jobs, split into one text per job before any parser sees them.

A log can hold more than one calculation: Gaussian's ``--Link1--`` job steps (each starts
with its own " Entering Link 1 = ..." line and copyright banner), ORCA's ``$new_job``
compound runs (each job after the input echo starts with a "$$$ JOB NUMBER n $$$" line),
and runs appended to one file (a second program banner). cclib reads such a file as one
job: the last job's charge with every job's energies in one list. Splitting the text first
gives each job its own record (``Source.job`` = 1, 2, ...; provenance ``path#job2``).

Markers are taken from the programs' outputs: Gaussian 16 prints " Entering Gaussian
System" and " Entering Link 1 = " at the start of a run and of every job step; ORCA 5/6
prints the "* O   R   C   A *" banner once per run, echoes the whole input (its jobs separated by
``$new_job``) once, and, for ``$new_job`` inputs, prints "$$$$$$$$$$$$$$$$  JOB NUMBER  n
$$$$$$$$$$$$$$" before each job. Each ORCA job's text starts with a copy of the run's banner and
its own part of the echo.
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
_ORCA_ECHO = re.compile(r"^\|\s*\d+>")
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


def _orca_runs(text: str) -> list[str]:
    """The text of each ORCA run appended to the file (one per program banner)."""
    starts = sorted({0, *[_back_over_frame(text, _line_start(text, m.start())) for m in _ORCA_BANNER.finditer(text)]})
    starts = [s for s in starts if s == 0 or text[:s].strip()]
    return [text[a:b] for a, b in zip(starts, starts[1:] + [len(text)])]


def _echo_heads(head: str, n_jobs: int) -> list[str]:
    """Job k's copy of the run's header: the banner, then only job k's lines of the input echo.

    ORCA echoes the whole input (every job, separated by ``$new_job``) once, before job 1; a job's
    keywords (functional, basis, charge) are read from the echo, so each job sees its own part.
    """
    lines = head.splitlines(keepends=True)
    echo = [i for i, line in enumerate(lines) if _ORCA_ECHO.match(line)]
    if not echo:
        return [head] * n_jobs
    groups: list[list[str]] = [[]]
    for i in echo:
        if "$new_job" in lines[i].lower():
            groups.append([])
        else:
            groups[-1].append(lines[i])
    before, after = "".join(lines[: echo[0]]), "".join(lines[echo[-1] + 1:])
    if len(groups) != n_jobs:  # an echo that does not split into the jobs: no job gets another's keywords
        return [before + after] * n_jobs
    return [before + "".join(g) + after for g in groups]


def _orca_jobs(text: str) -> list[tuple[str, bool]]:
    """(job text, finished_by_next) for every job of every run of an ORCA file."""
    out: list[tuple[str, bool]] = []
    for run in _orca_runs(text):
        marks = [m.start() for m in _ORCA_JOB.finditer(run)]
        if len(marks) < 2:
            out.append((run, False))
            continue
        heads = _echo_heads(run[: marks[0]], len(marks))
        bounds = marks + [len(run)]
        for k, (a, b) in enumerate(zip(bounds, bounds[1:])):
            out.append((heads[k] + run[a:b], k < len(marks) - 1))
    return out


def split_jobs(text: str, program: str) -> list[JobText]:
    """One JobText per job, in file order (a single-job file gives one, the whole text)."""
    if program == "ORCA":
        parts = _orca_jobs(text)
    elif program == "Gaussian":
        # text before the first marker (a queue system's header) belongs to the first job
        starts = sorted({0, *[s for s in _gaussian_starts(text) if s > 0 and text[:s].strip()]})
        parts = [(text[a:b], False) for a, b in zip(starts, starts[1:] + [len(text)])]
    else:
        parts = [(text, False)]
    if len(parts) <= 1:
        return [JobText(1, text)]
    return [JobText(i, part, finished_by_next=done) for i, (part, done) in enumerate(parts, start=1)]
