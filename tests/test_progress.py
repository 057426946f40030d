"""Progress on stderr: a bar on a terminal, plain lines when stderr is not one, nothing with --quiet.

Outside references: a real pseudo-terminal from the operating system (os.openpty, POSIX
openpty(3)) for "a terminal", a pipe for "not a terminal"; the bars are drawn by tqdm (package
index), recognised by its carriage-return redraws and its "NN%|" bar.
"""
from __future__ import annotations

import io
import os
import select
import subprocess
import sys

import pytest

from conftest import ROOT
from dossier.commands._progress import StageProgress

STAGES = ("reading output files", "analysing", "rendering HTML")


class FakeTerminal(io.StringIO):
    def isatty(self) -> bool:
        return True


def _run_stages(progress: StageProgress) -> None:
    with progress:
        progress("reading output files")
        for i in range(1, 25):
            progress.step(i, 24)
        progress("rendering HTML")


def test_plain_lines_when_not_a_terminal():
    out = io.StringIO()
    _run_stages(StageProgress("build", stream=out))
    text = out.getvalue()
    assert "\r" not in text and "%|" not in text  # no bar
    lines = text.splitlines()
    assert lines[0] == "build: reading output files" and lines[-1] == "build: rendering HTML"
    counts = [ln for ln in lines if ln.startswith("build: reading output files: ")]
    assert counts[-1].endswith("24/24") and 5 <= len(counts) <= 12  # about one line per tenth


def test_nothing_when_quiet_or_when_lines_are_not_wanted():
    for progress in (StageProgress("build", stream=FakeTerminal(), quiet=True),
                     StageProgress("build", stream=io.StringIO(), quiet=True),
                     StageProgress("read", stream=io.StringIO(), lines=False)):
        _run_stages(progress)
        assert progress.stream.getvalue() == ""


def test_bar_on_a_terminal():
    term = FakeTerminal()
    _run_stages(StageProgress("build", stream=term))
    text = term.getvalue()
    assert "\r" in text and "build: reading output files: 100% |" in text and "24/24" in text
    assert "build: rendering HTML [" in text  # an uncounted stage shows its time
    assert text.endswith("\n")  # the last bar is closed: an error line would start on a new line


def _fixture_project(tmp_path):
    from render_fixtures import write_fixture_manifest

    return write_fixture_manifest(tmp_path / "study", title="Progress")


def _build_cmd(manifest, out, *extra):
    # the fixture project has check errors (see render_fixtures): --draft writes it anyway
    return [sys.executable, "-m", "dossier", "build", str(manifest), "--out", str(out), "--formats", "json,html",
            "--draft", *extra]


@pytest.mark.slow
def test_build_progress_on_a_pipe_is_plain_lines_and_quiet_is_silent(tmp_path):
    manifest = _fixture_project(tmp_path)
    env = {**os.environ, "DOSSIER_CACHE_DIR": str(tmp_path / "cache")}
    done = subprocess.run(_build_cmd(manifest, tmp_path / "a"), capture_output=True, text=True, env=env,
                          cwd=ROOT, timeout=600)
    assert done.returncode == 0, done.stderr
    assert "\r" not in done.stderr and "%|" not in done.stderr
    for stage in STAGES:
        assert f"build: {stage}" in done.stderr
    quiet = subprocess.run(_build_cmd(manifest, tmp_path / "b", "--quiet"), capture_output=True, text=True,
                           env=env, cwd=ROOT, timeout=600)
    assert quiet.returncode == 0, quiet.stderr
    # the fixture project has check errors: those are findings, not progress, and stay
    assert "CHECKS FOUND" in quiet.stderr
    assert not any(stage in quiet.stderr for stage in STAGES) and "build: wrote" not in quiet.stderr


@pytest.mark.slow
def test_build_progress_on_a_terminal_is_a_bar(tmp_path):
    manifest = _fixture_project(tmp_path)
    env = {**os.environ, "DOSSIER_CACHE_DIR": str(tmp_path / "cache"), "COLUMNS": "100"}
    master, slave = os.openpty()
    try:
        proc = subprocess.Popen(_build_cmd(manifest, tmp_path / "out"), stdout=subprocess.DEVNULL, stderr=slave,
                                env=env, cwd=ROOT)
        os.close(slave)
        chunks = []
        while True:
            ready, _, _ = select.select([master], [], [], 600)
            if not ready:
                break
            try:
                data = os.read(master, 4096)
            except OSError:  # the terminal's other end closed (Linux: EIO)
                break
            if not data:
                break
            chunks.append(data)
        assert proc.wait(timeout=600) == 0
    finally:
        os.close(master)
    text = b"".join(chunks).decode("utf-8", errors="replace")
    assert "\r" in text and "build: reading output files: 100% |" in text
    assert "build: rendering HTML [" in text
