"""`dossier verify ARCHIVE [--rebuild]`: check an archive's checksums; optionally rebuild and compare."""
from __future__ import annotations

from dossier.archive.common import CHECKSUMS_NAME
from dossier.archive.verify import verify_archive
from dossier.commands._progress import StageProgress

HELP = "check every file of a dossier archive against its checksum list (and optionally rebuild it)"


def add_arguments(parser) -> None:
    parser.add_argument("archive", metavar="ARCHIVE", help="a .tar.gz written by `dossier archive`")
    parser.add_argument(
        "--rebuild", action="store_true",
        help="also rebuild the dossier from the archived files (in a temporary folder) and compare dossier.json",
    )
    parser.add_argument("--signer", metavar="KEY.pub", default=None,
                        help="also require ARCHIVE.sig to be a valid SSH signature by this public key "
                             "(or by a key of this OpenSSH allowed-signers file)")
    parser.add_argument("--jobs", type=int, default=None, metavar="N", help="parallel readers for the rebuild")
    parser.add_argument("--quiet", action="store_true",
                        help="no progress of the rebuild (default: a bar per stage on a terminal, plain lines otherwise)")


def run(args) -> int:
    with StageProgress("verify", quiet=args.quiet or not args.rebuild) as progress:
        report = verify_archive(args.archive, rebuild=args.rebuild, jobs=args.jobs, progress=progress,
                                signer=args.signer)
    for line in report.lines():
        print(line)
    if report.ok:
        extra = "; the rebuilt dossier.json agrees with the archived one" if report.rebuilt else ""
        if report.signature:
            extra += f"; signature good ({report.signature})"
        print(f"ok: all {report.checked} files match {CHECKSUMS_NAME}{extra}")
        return 0
    n = (len(report.refused) + len(report.missing) + len(report.altered) + len(report.unexpected)
         + len(report.problems) + len(report.rebuild_differences))
    print(f"FAILED: {n} finding(s) in {args.archive}")
    return 1
