"""`dossier archive MANIFEST --out FILE.tar.gz`: one deterministic, self-checking archive of a project."""
from __future__ import annotations

import sys

from dossier.archive.write import write_archive
from dossier.commands._progress import StageProgress

HELP = "pack the outputs, inputs, manifest, built dossier, checksums and environment into one .tar.gz"


def add_arguments(parser) -> None:
    parser.add_argument("manifest", metavar="MANIFEST", help="the project manifest (dossier.toml)")
    parser.add_argument("--out", required=True, metavar="FILE.tar.gz", help="archive to write (atomically)")
    parser.add_argument(
        "--build", metavar="DIR", default=None,
        help="an existing build of this manifest to archive; used only if it is current, "
        "otherwise (and by default) the dossier is built afresh in a temporary folder",
    )
    parser.add_argument(
        "--formats", default=None, metavar="LIST",
        help="comma-separated formats of a fresh build (default: the build's own default, all formats)",
    )
    parser.add_argument("--jobs", type=int, default=None, metavar="N", help="parallel readers for a fresh build")
    parser.add_argument("--no-cache", action="store_true",
                        help="accepted for old scripts: an archive always reads every output afresh")
    parser.add_argument("--sign", metavar="KEY", default=None,
                        help="sign the archive with this SSH private key (ssh-keygen -Y sign); "
                             "the signature is written beside it as FILE.tar.gz.sig")
    parser.add_argument("--quiet", action="store_true",
                        help="no progress (default: a bar per stage on a terminal, plain lines otherwise)")


def run(args) -> int:
    formats = None
    if args.formats:
        formats = tuple(f.strip() for f in args.formats.split(",") if f.strip())
    with StageProgress("archive", quiet=args.quiet) as progress:
        result = write_archive(
            args.manifest, args.out, build_dir=args.build, formats=formats, jobs=args.jobs,
            progress=progress, sign_key=args.sign,
        )
    for item in result.left_out:  # always shown, even with --quiet: the archive is not the whole project
        print(f"archive: left out {item['path']}: {item['reason']}", file=sys.stderr)
    print(f"wrote {result.path} ({len(result.members)} files); check it with: dossier verify {result.path}")
    if result.signature is not None:
        print(f"signed: {result.signature}; check it with: dossier verify {result.path} --signer KEY.pub")
    return 0
