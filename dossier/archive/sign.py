"""Optional signatures of an archive with the user's SSH key (OpenSSH ``ssh-keygen -Y``).

A checksum list inside an archive proves only that the files agree with the list the archive
carries: whoever changes a file can rewrite the list too. A signature made with a key only
its owner holds ties the whole archive to that key. We use the OpenSSH signature format
(``ssh-keygen -Y sign``, "SSHSIG"), so anyone can check a signature with ``ssh-keygen -Y
verify`` and no dossier at all. The signature of ``ARCHIVE.tar.gz`` is written beside it as
``ARCHIVE.tar.gz.sig``; the signed namespace is ``NAMESPACE``.
"""
from __future__ import annotations

import os
import shutil
import subprocess
import tempfile
from pathlib import Path

from dossier.errors import ArchiveError
from dossier.reading.files import refuse_special

NAMESPACE = "dossier-archive@dossier"
SIG_SUFFIX = ".sig"
_KEY_TYPES = ("ssh-", "ecdsa-", "sk-ssh-", "sk-ecdsa-")
_TIMEOUT_S = 120


def _ssh_keygen() -> str:
    found = shutil.which("ssh-keygen")
    if not found:
        raise ArchiveError("signing needs OpenSSH's ssh-keygen, which is not installed")
    return found


def _run(args: list[str], *, stdin=None, where: str) -> subprocess.CompletedProcess:
    try:
        return subprocess.run(args, stdin=stdin, capture_output=True, text=True, timeout=_TIMEOUT_S)
    except subprocess.TimeoutExpired:
        raise ArchiveError("ssh-keygen did not answer in time (a passphrase prompt?)", where=where) from None


def _last_line(text: str) -> str:
    lines = [ln.strip() for ln in text.splitlines() if ln.strip()]
    return lines[-1] if lines else "no message"


def sign_file(path: Path, key: str | os.PathLike) -> Path:
    """Sign `path` with the private key `key` (or the public key of a key held by ssh-agent); returns PATH.sig."""
    key = Path(key).expanduser()
    refuse_special(key, ArchiveError, "key file")
    if not key.is_file():
        raise ArchiveError("no such key file", where=str(key))
    sig = Path(f"{path}{SIG_SUFFIX}")
    sig.unlink(missing_ok=True)
    done = _run([_ssh_keygen(), "-q", "-Y", "sign", "-f", str(key), "-n", NAMESPACE, str(path)], where=str(key))
    if done.returncode != 0 or not sig.is_file():
        raise ArchiveError(f"ssh-keygen could not sign ({_last_line(done.stderr)})", where=str(key))
    return sig


def _is_public_key(text: str) -> bool:
    first = next((ln.strip() for ln in text.splitlines() if ln.strip() and not ln.lstrip().startswith("#")), "")
    return first.startswith(_KEY_TYPES)


def verify_signature(path: Path, signer: str | os.PathLike) -> str:
    """Check ``PATH.sig`` against `signer` (a public key file, or an OpenSSH allowed-signers file).

    Returns ssh-keygen's confirmation line; raises ArchiveError when the signature is absent,
    made by another key, or does not match the archive's bytes.
    """
    signer = Path(signer).expanduser()
    sig = Path(f"{path}{SIG_SUFFIX}")
    if not sig.is_file():
        raise ArchiveError(f"no signature beside the archive (expected {sig.name})", where=str(path))
    refuse_special(signer, ArchiveError, "key file")
    try:
        signer_text = signer.read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError) as exc:
        raise ArchiveError(f"cannot read the signer's key ({exc})", where=str(signer)) from None
    with tempfile.TemporaryDirectory(prefix="dossier-sig-") as scratch:
        if _is_public_key(signer_text):
            allowed = Path(scratch) / "allowed_signers"
            key_line = next(ln.strip() for ln in signer_text.splitlines() if ln.strip().startswith(_KEY_TYPES))
            allowed.write_text(f'signer namespaces="{NAMESPACE}" {key_line}\n', encoding="utf-8")
            principal = "signer"
        else:
            allowed = signer
            found = _run([_ssh_keygen(), "-Y", "find-principals", "-s", str(sig), "-f", str(allowed)], where=str(sig))
            if found.returncode != 0 or not found.stdout.strip():
                raise ArchiveError("the signature was made by a key the allowed-signers file does not name",
                                   where=str(sig))
            principal = found.stdout.split()[0]
        with open(path, "rb") as data:
            done = _run([_ssh_keygen(), "-Y", "verify", "-f", str(allowed), "-I", principal, "-n", NAMESPACE,
                         "-s", str(sig)], stdin=data, where=str(sig))
    if done.returncode != 0:
        raise ArchiveError(f"signature does not verify ({_last_line(done.stderr or done.stdout)})", where=str(sig))
    return _last_line(done.stdout or done.stderr)
