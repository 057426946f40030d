"""Command line: parse arguments, call the API, map errors to one line and an exit code.

Each subcommand lives in its own module under dossier/commands/ and defines
``HELP`` (one line), ``add_arguments(parser)`` and ``run(args) -> int``.
Modules are discovered, so adding a command touches no other file. Only the module of the
command being run is imported (start-up stays fast); `dossier --help` imports them all.
"""
from __future__ import annotations

import argparse
import importlib
import os
import pkgutil
import signal
import sys
import warnings

from dossier import __version__, commands
from dossier.errors import DossierError, Terminated, clear_termination, request_termination

EXIT_OK = 0
EXIT_FINDINGS = 1  # the command ran and found problems (check errors, verify failures)
EXIT_ERROR = 2  # the command could not do its job (bad input, bad manifest)


def command_names() -> list[str]:
    return sorted(m.name for m in pkgutil.iter_modules(commands.__path__) if not m.name.startswith("_"))


def _chosen_command(argv: list[str], names: list[str]) -> str | None:
    """The subcommand named on the command line, if any (the first word that is not an option)."""
    for word in argv:
        if not word.startswith("-"):
            return word if word in names else None
    return None


def build_parser(only: str | None = None) -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="dossier",
        description="Turn an electron-transfer study's quantum-chemistry outputs into a checked dossier.",
    )
    parser.add_argument("--version", action="version", version=f"dossier {__version__}")
    parser.add_argument("--debug", action="store_true", help="show a traceback on errors")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    for name in command_names():
        if only is not None and name != only:
            continue
        module = importlib.import_module(f"dossier.commands.{name}")
        p = sub.add_parser(name, help=module.HELP, description=module.HELP)
        p.add_argument("--debug", action="store_true", default=argparse.SUPPRESS, help="show a traceback on errors")
        module.add_arguments(p)
        p.set_defaults(_run=module.run)
    return parser


def _on_sigterm(signum, frame):  # noqa: ARG001 - signal handler signature
    request_termination(Terminated)
    raise Terminated()


def _on_sigint(signum, frame):  # noqa: ARG001 - signal handler signature
    request_termination(KeyboardInterrupt)
    raise KeyboardInterrupt()


def _quiet_unraisable(unraisable) -> None:
    """A SIGTERM or Ctrl-C landing while a finalizer runs cannot propagate from there; the request is remembered
    (dossier.errors.raise_if_terminated stops the work), so say nothing here instead of a traceback."""
    if isinstance(unraisable.exc_value, KeyboardInterrupt):  # Terminated too
        return
    sys.__unraisablehook__(unraisable)


def _one_line_warning(message, category, filename, lineno, file=None, line=None):  # noqa: ARG001
    """A library warning the code did not already handle, as one line on stderr (not a source excerpt)."""
    where = os.path.basename(str(filename))
    text = " ".join(str(message).split())
    print(f"dossier: note: {category.__name__} in {where}:{lineno}: {text}", file=file or sys.stderr)


def main(argv: list[str] | None = None) -> int:
    argv = sys.argv[1:] if argv is None else list(argv)
    parser = build_parser(only=_chosen_command(argv, command_names()))
    args = parser.parse_args(argv)
    if not getattr(args, "_run", None):
        parser.print_help(sys.stderr)
        return EXIT_ERROR
    clear_termination()
    previous = signal.getsignal(signal.SIGTERM), signal.getsignal(signal.SIGINT)
    try:
        signal.signal(signal.SIGTERM, _on_sigterm)
        signal.signal(signal.SIGINT, _on_sigint)
        sys.unraisablehook = _quiet_unraisable
    except ValueError:  # not the main thread (tests calling main() from a thread): leave it
        previous = None
    try:
        with warnings.catch_warnings():
            if not args.debug:
                warnings.showwarning = _one_line_warning
            return int(args._run(args) or 0)
    except DossierError as exc:
        if args.debug:
            raise
        print(f"dossier: {exc}", file=sys.stderr)
        return EXIT_ERROR
    except Terminated:
        print("dossier: terminated (SIGTERM); nothing half-written was left behind", file=sys.stderr)
        return 128 + signal.SIGTERM
    except KeyboardInterrupt:
        print("dossier: interrupted; nothing half-written was left behind", file=sys.stderr)
        return 130
    except BrokenPipeError:
        return EXIT_OK
    finally:
        if previous is not None:
            signal.signal(signal.SIGTERM, previous[0])
            signal.signal(signal.SIGINT, previous[1])
            sys.unraisablehook = sys.__unraisablehook__


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
