"""Every command's --help lists exactly the options docs/commands.md documents for it.

Outside reference: argparse's own --help text (the standard library), read from a real run of
`python -m dossier COMMAND --help`, against the option tables of docs/commands.md.
"""
from __future__ import annotations

import os
import re
import subprocess
import sys

import pytest

from conftest import ROOT
from dossier.cli import command_names

DOC = ROOT / "docs" / "commands.md"


def documented_options() -> dict[str, set[str]]:
    """Section `dossier NAME` (or `dossier` for the top level) -> the options of its table."""
    found: dict[str, set[str]] = {}
    current = None
    for line in DOC.read_text(encoding="utf-8").splitlines():
        heading = re.match(r"## `dossier(?: (\w+))?`\s*$", line)
        if heading:
            current = heading.group(1) or ""
            found[current] = set()
        elif line.startswith("#"):
            current = None
        elif current is not None and line.startswith("| `--"):
            found[current].add(re.match(r"\| `(--[\w-]+)", line).group(1))
    return found


def help_options(*command: str) -> set[str]:
    done = subprocess.run([sys.executable, "-m", "dossier", *command, "--help"], capture_output=True, text=True,
                          cwd=ROOT, timeout=120, env={**os.environ, "COLUMNS": "200"})
    assert done.returncode == 0, done.stderr
    # argparse lists each option at the start of a line of its options block: "  --jobs N  help text"
    return set(re.findall(r"^\s{2}(--[\w-]+)", done.stdout, flags=re.M)) - {"--help"}


def test_every_command_has_a_section():
    assert set(documented_options()) == {"", *command_names()}


@pytest.mark.parametrize("name", command_names())
def test_help_lists_only_documented_options(name):
    documented = documented_options()[name]
    shown = help_options(name)
    assert shown, f"no options parsed from `dossier {name} --help`"
    assert shown - documented == set(), f"undocumented in docs/commands.md: {sorted(shown - documented)}"
    assert documented - shown == set(), f"documented but not an option: {sorted(documented - shown)}"


def test_top_level_help_lists_only_documented_options():
    assert help_options() == documented_options()[""]
