"""Getting a log's text off the disk safely: regular files only, a size cap, compression and
text encodings recognised.

- Only regular files are read. Named pipes, devices and sockets are refused by their type
  from a ``stat`` before anything is opened (a FIFO would block forever, ``/dev/zero`` would
  fill the memory); the file is then opened non-blocking and its type checked again on the
  open descriptor, so a file swapped for a pipe in between is refused too.
- A size cap (``DEFAULT_MAX_MB``, or ``$DOSSIER_MAX_FILE_MB``, or the ``max_bytes``
  argument) bounds both the file and what it decompresses to.
- gzip, bzip2 and xz logs (recognised by their magic bytes, not their name) are decompressed
  in memory; UTF-8 (with or without a byte-order mark) and UTF-16 (with a byte-order mark, or
  recognised by its zero bytes) are decoded. What was done is returned as a short label that
  goes into the record's provenance (``Source.encoding``), e.g. ``"gzip, UTF-16LE"``.
"""
from __future__ import annotations

import bz2
import errno
import lzma
import os
import stat
import zlib
from pathlib import Path

from dossier.errors import DossierError, ReadError
from dossier.reading.detect import looks_binary

#: Default cap on a log's size (on disk and decompressed), in MB (10^6 bytes).
DEFAULT_MAX_MB = 1024
MAX_MB_ENV = "DOSSIER_MAX_FILE_MB"

_KIND_NAMES = (
    (stat.S_ISFIFO, "a named pipe (FIFO)"),
    (stat.S_ISCHR, "a character device"),
    (stat.S_ISBLK, "a block device"),
    (stat.S_ISSOCK, "a socket"),
)

#: magic bytes -> (label, decompressor factory)
_COMPRESSED = (
    (b"\x1f\x8b", "gzip", lambda: zlib.decompressobj(16 + zlib.MAX_WBITS)),
    (b"BZh", "bzip2", bz2.BZ2Decompressor),
    (b"\xfd7zXZ\x00", "xz", lzma.LZMADecompressor),
)


def max_bytes_default() -> int:
    """The size cap in bytes: $DOSSIER_MAX_FILE_MB when set (a positive number), else DEFAULT_MAX_MB."""
    raw = os.environ.get(MAX_MB_ENV, "").strip()
    if not raw:
        return DEFAULT_MAX_MB * 1_000_000
    try:
        value = float(raw)
    except ValueError:
        value = float("nan")
    if not (value > 0 and value < 1e9):
        raise DossierError(f"must be a positive number of MB, not {raw!r}", where=f"${MAX_MB_ENV}")
    return int(value * 1_000_000)


def kind_of(mode: int) -> str | None:
    """What a non-regular file is ("a named pipe (FIFO)", ...), None for a regular file."""
    if stat.S_ISREG(mode):
        return None
    if stat.S_ISDIR(mode):
        return "a folder"
    for test, name in _KIND_NAMES:
        if test(mode):
            return name
    return "not a regular file"


def _too_big(size: int, cap: int, what: str) -> ReadError:
    return ReadError(f"{what} {size / 1e6:.0f} MB, above the size cap of {cap / 1e6:.0f} MB "
                     f"(set ${MAX_MB_ENV} to read larger logs)")


def _os_error(exc: OSError, path: Path, where: str) -> ReadError:
    if isinstance(exc, FileNotFoundError) or exc.errno == errno.ENOENT:
        if os.path.islink(path):
            return ReadError("broken symbolic link", where)
        return ReadError("no such file", where)
    if isinstance(exc, PermissionError):
        return ReadError("permission denied (file is not readable)", where)
    if exc.errno == errno.ELOOP:
        return ReadError("symbolic link loop", where)
    return ReadError(f"cannot be read ({exc.strerror or exc})", where)


def load_bytes(path: Path, where: str, max_bytes: int | None = None) -> bytes:
    """The bytes of a regular file, refusing other file types before opening and files above the cap."""
    cap = max_bytes if max_bytes is not None else max_bytes_default()
    try:
        st = os.stat(path)
        kind = kind_of(st.st_mode)
        if kind == "a folder":
            raise ReadError("is a folder, not an output file", where)
        if kind is not None:
            raise ReadError(f"is {kind}, not a regular file; only regular files are read", where)
        if st.st_size > cap:
            raise ReadError(_too_big(st.st_size, cap, "is").reason, where)
        fd = os.open(path, os.O_RDONLY | getattr(os, "O_NONBLOCK", 0) | getattr(os, "O_NOCTTY", 0))
        with os.fdopen(fd, "rb") as fh:
            kind = kind_of(os.fstat(fh.fileno()).st_mode)
            if kind is not None:
                raise ReadError(f"is {kind}, not a regular file; only regular files are read", where)
            raw = fh.read(cap + 1)
    except ReadError:
        raise
    except OSError as exc:
        raise _os_error(exc, path, where) from None
    if len(raw) > cap:
        raise ReadError(_too_big(len(raw), cap, "grew to more than").reason, where)
    return raw


def is_compressed(raw: bytes) -> bool:
    """True when the bytes start like a gzip, bzip2 or xz file."""
    return any(raw.startswith(magic) for magic, _, _ in _COMPRESSED)


def decompress(raw: bytes, where: str, max_bytes: int | None = None) -> tuple[bytes, str | None]:
    """(content, "gzip" | "bzip2" | "xz") for a compressed file, (raw, None) otherwise; capped."""
    cap = max_bytes if max_bytes is not None else max_bytes_default()
    for magic, label, factory in _COMPRESSED:
        if raw.startswith(magic):
            break
    else:
        return raw, None
    out = bytearray()
    data = raw
    try:
        while data:
            dec = factory()
            out += dec.decompress(data, cap + 1 - len(out))
            if len(out) > cap:
                raise ReadError(_too_big(len(out), cap, f"decompresses ({label}) to more than").reason, where)
            if not getattr(dec, "eof", True):
                raise ReadError(f"{label}-compressed file is cut short or damaged", where)
            data = dec.unused_data  # concatenated members (gzip -c a b > c) are read one after another
            if data and not data.startswith(magic):
                break
    except (OSError, EOFError, zlib.error, lzma.LZMAError, ValueError) as exc:
        raise ReadError(f"{label}-compressed file is damaged ({exc})", where) from None
    return bytes(out), label


def _utf16_without_bom(head: bytes) -> str | None:
    """'utf-16-le' / 'utf-16-be' when ASCII text was written as UTF-16 without a byte-order mark."""
    sample = head[: 4096 - (len(head[:4096]) % 2)]
    if len(sample) < 64:
        return None
    odd_zero = sample[1::2].count(0) / (len(sample) // 2)
    even_zero = sample[0::2].count(0) / (len(sample) // 2)
    if odd_zero > 0.9 and even_zero < 0.1:
        return "utf-16-le"
    if even_zero > 0.9 and odd_zero < 0.1:
        return "utf-16-be"
    return None


def decode(raw: bytes, where: str) -> tuple[str, str | None]:
    """(text, encoding label or None for plain UTF-8); raises ReadError for binary data."""
    if raw.startswith((b"\xff\xfe", b"\xfe\xff")):
        codec, label = "utf-16", "UTF-16LE" if raw.startswith(b"\xff\xfe") else "UTF-16BE"
    elif (guess := _utf16_without_bom(raw[:4096])) is not None:
        codec, label = guess, guess.upper().replace("UTF-16-", "UTF-16")
    else:
        body = raw[3:] if raw.startswith(b"\xef\xbb\xbf") else raw
        if looks_binary(body[:65536]):
            raise ReadError("binary data, not a text output file", where)
        return body.decode("utf-8", errors="replace"), ("UTF-8 with byte-order mark" if body is not raw else None)
    text = raw.decode(codec, errors="replace")
    if "\x00" in text[:65536]:
        raise ReadError("binary data, not a text output file", where)
    return text, label


def refuse_special(path, error_cls=ReadError, what: str = "file") -> None:
    """Raise `error_cls` for anything at `path` that is not a regular file (checked by type, without
    opening it: a named pipe would block). A missing path passes: the caller's own open reports it."""
    try:
        mode = os.stat(path).st_mode
    except OSError:
        return
    kind = kind_of(mode)
    if kind is not None and kind != "a folder":
        raise error_cls(f"is {kind}, not a regular {what}; only regular files are read", str(path))


class LineReader:
    """A read-only, seekable text stream over a str, line by line, without copying it.

    cclib reads its input through ``io.StringIO`` otherwise, which holds a second copy of the
    text at four bytes per character (800 MB for a 200 MB log). cclib's file wrapper uses only
    ``seek(0, 0)``, ``seek(0, 2)``, ``tell()``, iteration and ``close()``.
    """

    name = "log text"

    def __init__(self, text: str):
        self._text = text
        self._pos = 0

    def seekable(self) -> bool:
        return True

    def seek(self, offset: int, whence: int = 0) -> int:
        self._pos = len(self._text) + offset if whence == 2 else offset if whence == 0 else self._pos + offset
        return self._pos

    def tell(self) -> int:
        return self._pos

    def __iter__(self):
        return self

    def __next__(self) -> str:
        line = self.readline()
        if not line:
            raise StopIteration
        return line

    def readline(self) -> str:
        text, start = self._text, self._pos
        if start >= len(text):
            return ""
        end = text.find("\n", start)
        end = len(text) if end < 0 else end + 1
        self._pos = end
        return text[start:end]

    def read(self, size: int = -1) -> str:
        start = self._pos
        end = len(self._text) if size is None or size < 0 else min(len(self._text), start + size)
        self._pos = end
        return self._text[start:end]

    def close(self) -> None:
        pass
