"""`dossier build MANIFEST`: write the dossier (HTML, PDF, JSON, CSV, XYZ, LaTeX, BibTeX).

The output folder defaults to ``dossier-build`` beside the manifest. It is replaced as a
whole when the build succeeds, and only if it is empty or holds an earlier dossier build.
Exit status: 0 when the dossier was written; 1 when the checks found errors, in which case
nothing is written and the errors are printed (``--draft`` builds anyway: every page is marked
"draft: N check errors" and dossier.json has ``"draft": true``); 2 on bad input.
"""
from __future__ import annotations

import argparse

import sys

from dossier.errors import ChecksFailed
from dossier.commands._progress import StageProgress
from dossier.report.build import ALL_FORMATS, DEFAULT_OUT_NAME, build_dossier, parse_formats

HELP = "build the supporting-information dossier (HTML, PDF, JSON, CSV, XYZ, LaTeX, BibTeX) from a manifest"


def add_arguments(parser) -> None:
    parser.add_argument("manifest", metavar="MANIFEST", help="the project manifest (dossier.toml)")
    parser.add_argument("--out", metavar="DIR", default=None,
                        help=f"output folder (default: {DEFAULT_OUT_NAME}/ beside the manifest); replaced as a whole")
    parser.add_argument("--formats", metavar="LIST", default=",".join(ALL_FORMATS),
                        help=f"comma-separated outputs to write (default: {','.join(ALL_FORMATS)})")
    parser.add_argument("--templates", metavar="DIR", default=None,
                        help="folder of templates overriding the built-in ones (rendered sandboxed)")
    parser.add_argument("--png", action="store_true", help="also write every figure as PNG under figures/")
    parser.add_argument("--number-atoms", action=argparse.BooleanOptionalAction, default=True,
                        help="number the atoms in the structure drawings (default: on)")
    parser.add_argument("--jobs", type=int, default=None, metavar="N", help="parallel readers (default: all cores)")
    parser.add_argument("--no-cache", action="store_true", help="re-read every output file instead of using the cache")
    parser.add_argument("--quiet", action="store_true",
                        help="no progress (default: a bar per stage on a terminal, plain lines otherwise)")
    parser.add_argument("--draft", action="store_true",
                        help="build even when the checks find errors; every page is marked as a draft")


def _print_errors(errors: list[dict], head: str) -> None:
    print(head, file=sys.stderr)
    for c in errors[:10]:
        where = " ".join(x for x in (c.get("state"), c.get("file")) if x)
        print(f"  error {c.get('code')}: {where}: {c.get('message')}", file=sys.stderr)
    if len(errors) > 10:
        print(f"  ... and {len(errors) - 10} more", file=sys.stderr)


def run(args) -> int:
    formats = parse_formats(args.formats)
    try:
        with StageProgress("build", quiet=args.quiet) as progress:
            result = build_dossier(args.manifest, args.out, formats=formats, templates_dir=args.templates,
                                   jobs=args.jobs, use_cache=not args.no_cache, progress=progress,
                                   png=args.png, numbered_atoms=args.number_atoms, draft=args.draft)
    except ChecksFailed as exc:
        n = len(exc.errors)
        _print_errors(exc.errors, f"build: CHECKS FOUND {n} ERROR{'S' if n != 1 else ''}; nothing was written "
                                  "(fix them, or build with --draft to write a dossier marked as a draft):")
        return 1
    checks = result.data.get("checks") or []
    errors = [c for c in checks if c.get("severity") == "error"]
    if errors:
        n = len(errors)
        _print_errors(errors, f"build: DRAFT: CHECKS FOUND {n} ERROR{'S' if n != 1 else ''} "
                              "(every page is marked as a draft):")
    if result.n_warnings and not args.quiet:
        print(f"build: {result.n_warnings} warning{'s' if result.n_warnings != 1 else ''} from the checks", file=sys.stderr)
    n = len(result.files)
    if not args.quiet:
        print(f"build: wrote {n} file{'s' if n != 1 else ''} to {result.out_dir}", file=sys.stderr)
    for name in sorted(result.files):
        print(result.files[name])
    return 0
