"""Progress of long commands on stderr: a bar per stage on a terminal (drawn by tqdm), plain
lines when stderr is not a terminal (a log, a pipe, CI), nothing when the user asks for quiet.

A `StageProgress` is what the library's ``progress`` arguments take: calling it with a text
starts a stage ("reading output files"); ``step(done, total)`` reports a counted stage's
progress. `dossier.report.build.build_dossier` and `dossier.archive.write` call it; a plain function of
one string works there too (then counts arrive as text lines).
"""
from __future__ import annotations

import io
import os
import sys

#: A counted stage's bar: what, how far, how long, how long still.
_COUNTED = "{desc}: {percentage:3.0f}% |{bar}| {n_fmt}/{total_fmt} [{elapsed}<{remaining}]"
#: A stage without counts (drawing, rendering): what, and for how long so far.
_UNCOUNTED = "{desc} [{elapsed}]"


def _size(stream) -> tuple[int, int]:
    """Columns and lines of the terminal behind ``stream``; 0 when it reports none (a fresh
    pseudo-terminal does), which would make tqdm draw nothing."""
    try:
        size = os.get_terminal_size(stream.fileno())
    except (AttributeError, ValueError, OSError, io.UnsupportedOperation):
        return 0, 0
    return size.columns, size.lines


def is_terminal(stream) -> bool:
    try:
        return bool(stream.isatty())
    except (AttributeError, ValueError):  # no isatty, or a closed stream
        return False


class StageProgress:
    """Stages of one command, e.g. ``StageProgress("build", quiet=args.quiet)``.

    On a terminal each stage gets a tqdm bar that stays on screen when it ends (counted stages
    as a bar with counts, others with their time). Elsewhere each stage is one line
    ``build: reading output files``, counts one line per tenth (``build: reading output files: 12/24``),
    never a carriage return. ``quiet``: nothing at all. ``lines=False``: bars on a terminal only,
    no plain lines (for commands whose stderr is read by scripts). Use as a context manager so
    that a bar is closed before an error line is printed.
    """

    def __init__(self, prefix: str, *, quiet: bool = False, stream=None, lines: bool = True, delay_s: float = 0.0):
        self.prefix = prefix
        self.stream = stream if stream is not None else sys.stderr
        self.quiet = quiet
        self.terminal = is_terminal(self.stream)
        self.lines = lines
        self.delay_s = delay_s
        self._bar = None
        self._text = ""
        self._tenth = -1

    def __enter__(self) -> "StageProgress":
        return self

    def __exit__(self, *exc) -> None:
        self.close()

    def __call__(self, text: str) -> None:
        """A new stage begins (the previous one ends)."""
        if self.quiet:
            return
        self.close()
        self._text, self._tenth = text, -1
        if self.terminal:
            from tqdm import tqdm

            width, height = _size(self.stream)  # one that reports no size is taken as 80 x 24
            self._bar = tqdm(desc=f"{self.prefix}: {text}", total=None, file=self.stream, leave=True,
                             bar_format=_UNCOUNTED, ncols=width or 80, nrows=height or 24,
                             dynamic_ncols=width > 0 and height > 0, delay=self.delay_s)
        elif self.lines:
            print(f"{self.prefix}: {text}", file=self.stream, flush=True)

    def step(self, done: int, total: int) -> None:
        """``done`` of ``total`` items of the current stage are finished."""
        if self.quiet or total <= 0:
            return
        if self.terminal:
            if self._bar is None:
                self(self._text or "working")
            bar = self._bar
            if bar.total != total:
                bar.total = total
                bar.bar_format = _COUNTED
            bar.update(done - bar.n)
        elif self.lines:
            tenth = done * 10 // total
            if tenth != self._tenth or done == total:
                self._tenth = tenth
                print(f"{self.prefix}: {self._text}: {done}/{total}", file=self.stream, flush=True)

    def close(self) -> None:
        """End the current stage (its bar stays on screen with its final count and time)."""
        if self._bar is not None:
            self._bar.close()
            self._bar = None
