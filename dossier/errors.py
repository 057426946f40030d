"""One exception family. The CLI turns each into one line: `<where>: <reason>`."""
from __future__ import annotations


class DossierError(Exception):
    """Base of every error the tool reports to a user.

    `where` names the file (and, for a manifest, the line) the problem is in;
    `reason` says what is wrong and, where possible, what to do.
    """

    def __init__(self, reason: str, where: str | None = None):
        super().__init__(reason)
        self.reason = reason
        self.where = where

    def __str__(self) -> str:
        return f"{self.where}: {self.reason}" if self.where else self.reason


class ReadError(DossierError):
    """An output file could not be read into a Calculation record."""


class ManifestError(DossierError):
    """The project manifest is malformed or refers to something that does not exist."""


class CheckError(DossierError):
    """`dossier check` found errors (used for the exit status, not for a crash)."""


class BuildError(DossierError):
    """The dossier could not be built or written."""


class ArchiveError(DossierError):
    """An archive could not be written, or failed verification."""


class ChecksFailed(BuildError):
    """`dossier build` refused to write a dossier because `check` found errors (use --draft to build anyway)."""

    def __init__(self, reason: str, errors: list[dict], where: str | None = None):
        super().__init__(reason, where=where)
        self.errors = errors


class Terminated(KeyboardInterrupt):
    """SIGTERM (a queue's kill, `kill PID`), raised like Ctrl-C so the same clean-up runs."""


_stop_requested: type[KeyboardInterrupt] | None = None


def request_termination(kind: type[KeyboardInterrupt] = Terminated) -> None:
    """Called by the SIGTERM (Terminated) and SIGINT (KeyboardInterrupt) handlers before they raise.
    Python drops an exception raised while a finalizer runs ("Exception ignored in ..."), so the
    request is also remembered here."""
    global _stop_requested
    _stop_requested = kind


def clear_termination() -> None:
    """Forget an earlier request (a new command run in the same process starts clean)."""
    global _stop_requested
    _stop_requested = None


def raise_if_terminated() -> None:
    """Raise the remembered interrupt if SIGTERM or Ctrl-C arrived, even one whose exception a finalizer
    swallowed; long work calls this before each step that cannot be undone (renaming a finished
    dossier or archive into place)."""
    if _stop_requested is not None:
        raise _stop_requested()
