"""Run status from the log text: normal termination, errors, SCF and optimisation convergence.

Marker strings are the ones the programs print (checked on the shared fixture logs; error
and non-convergence wordings from the programs' own messages, common practice, no source).
Only a complete, normally terminated, converged run gets the word "ok".
"""
from __future__ import annotations

import re

from dossier.records import RunStatus

# program -> (normal-termination regex, [error regexes], [scf-not-converged], [opt-converged], [opt-not-converged])
MARKERS = {
    "Gaussian": (
        r"Normal termination of Gaussian",
        [r"Error termination", r"Erroneous write", r"galloc:  could not allocate"],
        [r"Convergence failure -- run terminated", r">>>>>>>>>> Convergence criterion not met"],
        [r"Optimization completed\.", r"-- Stationary point found\."],
        [r"Optimization stopped\.", r"Number of steps exceeded"],
    ),
    "ORCA": (
        r"\*\*\*\*ORCA TERMINATED NORMALLY\*\*\*\*",
        [r"ORCA finished by error termination", r"aborting the run", r"ORCA TERMINATED ABNORMALLY"],
        [r"SCF NOT CONVERGED AFTER", r"The SCF is NOT converged"],
        [r"THE OPTIMIZATION HAS CONVERGED"],
        [r"The optimization did not converge", r"OPTIMIZATION DID NOT CONVERGE"],
    ),
    "Q-Chem": (
        r"Thank you very much for using Q-Chem",
        [r"Q-Chem fatal error", r"Error in gen_scfman", r"Please submit a crash report"],
        [r"SCF failed to converge", r"Convergence failure"],
        [r"\*\*\s+OPTIMIZATION CONVERGED\s+\*\*"],
        [r"MAXIMUM OPTIMIZATION CYCLES REACHED", r"OPTIMIZATION FAILED"],
    ),
    "NWChem": (
        r"Total times\s+cpu:",
        [r"There is an error in the input file", r"There is an error in", r"This error has not yet been assigned",
         r"This type of error is most commonly associated", r"ARMCI Error", r"MPI_ABORT was invoked"],
        [r"Calculation failed to converge", r"SCF failed to converge"],
        [r"Optimization converged"],
        [r"Optimization failed", r"failed to converge in \d+ steps", r"Failed to converge in maximum number of steps", r"optimize failed"],
    ),
    "Psi4": (
        r"\*\*\* Psi4 exiting successfully\.",
        [r"Psi4 encountered an error", r"\*\*\* Psi4 encountered an error", r"Traceback \(most recent call last\)"],
        [r"Could not converge SCF iterations", r"SCFConvergenceError"],
        [r"\*\*\*\* Optimization is complete!", r"Final optimized geometry and variables"],
        [r"Could not converge geometry optimization", r"OptimizationConvergenceError"],
    ),
    "xtb": (
        r"\* finished run on|normal termination of xtb",
        [r"abnormal termination of xtb", r"\n\s*\[ERROR\]"],
        [r"SCC did not converge", r"Self consistent charge iterator did not converge"],
        [r"GEOMETRY OPTIMIZATION CONVERGED"],
        [r"FAILED TO CONVERGE GEOMETRY OPTIMIZATION"],
    ),
}


def _any(patterns, text):
    for p in patterns:
        m = re.search(p, text, re.M)
        if m:
            return m
    return None


def run_status(program: str, text: str, *, is_optimization: bool) -> RunStatus:
    normal, errors, scf_bad, opt_ok, opt_bad = MARKERS[program]
    tail = text[-20000:]
    normal_end = re.search(normal, tail, re.M) is not None
    # Gaussian writes one "Normal termination" per link-1 step: the last step decides.
    if program == "Gaussian":
        last_normal = text.rfind("Normal termination of Gaussian")
        last_error = text.rfind("Error termination")
        normal_end = last_normal >= 0 and last_normal > last_error and not text[last_normal:].count("Entering Link 1 = ")
    err = _any(errors, text if program != "Psi4" else tail)
    scf_failed = _any(scf_bad, text)
    status = RunStatus(normal_termination=normal_end, scf_converged=not bool(scf_failed))
    opt_failed = False
    if is_optimization:
        opt_failed = _any(opt_bad, text) is not None  # the program said so: ran out of steps
        status.optimization_converged = False if opt_failed else bool(_any(opt_ok, text))
    if opt_failed:
        # the run ended (often with an error exit) because the optimisation ran out of steps:
        # a complete log whose last geometry is not a stationary point
        status.word = "not-converged"
        status.reason = "the geometry optimisation did not converge" + ("" if normal_end else " (the program then stopped)")
    elif scf_failed:
        status.word = "not-converged"
        status.reason = f"SCF did not converge: {_line_of(text, scf_failed)}"
    elif err and not normal_end:
        status.word = "failed"
        status.reason = f"the program stopped with an error: {_line_of(text, err)}"
    elif not normal_end:
        status.word = "truncated"
        status.reason = "the log ends before the program's normal-termination line (cut off or still running)"
    elif is_optimization and not status.optimization_converged:
        status.word = "not-converged"
        status.reason = "the run ended normally but the log never says the optimisation converged"
    else:
        status.word = "ok"
    return status


def _line_of(text: str, m: re.Match) -> str:
    start = text.rfind("\n", 0, m.start()) + 1
    end = text.find("\n", m.end())
    return " ".join(text[start : end if end >= 0 else len(text)].split())[:160]
