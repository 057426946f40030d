"""Where a key sits in a manifest: key path -> line number in the raw TOML text.

tomllib keeps no positions, so every manifest error that names a line finds it here.
"""
from __future__ import annotations

import tomllib


class Locator:
    """Finds the line of each table header and key in a TOML text tomllib has accepted.

    Paths are tuples of keys, with integer indices for arrays of tables and arrays:
    ("pathways", 0, "reactant"), ("states", "min_a", "single_points", "mp2").
    """

    def __init__(self, text: str):
        self.text = text
        self.lines: dict[tuple, int] = {}
        self._arrays: dict[tuple, int] = {}
        self._pos = 0
        self._line = 1
        try:
            self._scan()
        except (IndexError, ValueError, tomllib.TOMLDecodeError):  # pragma: no cover - best effort
            pass

    def line_of(self, key: tuple) -> int:
        key = tuple(key)
        while key:
            if key in self.lines:
                return self.lines[key]
            key = key[:-1]
        return 1

    # -- scanner helpers ---------------------------------------------------
    def _peek(self, n: int = 1) -> str:
        return self.text[self._pos : self._pos + n]

    def _advance(self, n: int = 1) -> None:
        chunk = self.text[self._pos : self._pos + n]
        self._line += chunk.count("\n")
        self._pos += n

    def _skip_ws(self, newlines: bool) -> None:
        while self._pos < len(self.text):
            c = self.text[self._pos]
            if c in " \t\r" or (newlines and c == "\n"):
                self._advance()
            elif c == "#" and newlines:
                end = self.text.find("\n", self._pos)
                self._advance((len(self.text) if end < 0 else end) - self._pos)
            else:
                break

    def _skip_line(self) -> None:
        end = self.text.find("\n", self._pos)
        self._advance((len(self.text) if end < 0 else end + 1) - self._pos)

    def _skip_string(self) -> None:
        for delim in ('"""', "'''"):
            if self._peek(3) == delim:
                self._advance(3)
                while self._pos < len(self.text):
                    if delim == '"""' and self._peek() == "\\":
                        self._advance(2)
                        continue
                    if self._peek(3) == delim:
                        self._advance(3)
                        while self._peek() == delim[0]:  # up to two extra quotes belong to the content
                            self._advance()
                        return
                    self._advance()
                return
        quote = self._peek()
        self._advance()
        while self._pos < len(self.text) and self._peek() != quote:
            if quote == '"' and self._peek() == "\\":
                self._advance()
            self._advance()
        self._advance()

    def _read_key(self, stop: str) -> tuple:
        """Read a (dotted, possibly quoted) key up to `stop`; return its parts."""
        start = self._pos
        while self._pos < len(self.text) and self._peek() not in stop:
            if self._peek() in "\"'":
                self._skip_string()
            else:
                self._advance()
        raw = self.text[start : self._pos].strip()
        parsed = tomllib.loads(f"{raw} = 0")
        parts = []
        while isinstance(parsed, dict):
            (k, parsed), = parsed.items()
            parts.append(k)
        return tuple(parts)

    def _resolve(self, parts: tuple) -> tuple:
        out: tuple = ()
        for p in parts:
            out += (p,)
            if out in self._arrays:
                out += (self._arrays[out] - 1,)
        return out

    def _record(self, path: tuple, line: int) -> None:
        self.lines.setdefault(path, line)

    def _scan(self) -> None:
        table: tuple = ()
        while True:
            self._skip_ws(newlines=True)
            if self._pos >= len(self.text):
                return
            line = self._line
            if self._peek(2) == "[[":
                self._advance(2)
                parts = self._read_key("]")
                self._advance(2)
                parent = self._resolve(parts[:-1])
                full = parent + (parts[-1],)
                self._arrays[full] = self._arrays.get(full, 0) + 1
                table = full + (self._arrays[full] - 1,)
                for i in range(1, len(parent) + 1):
                    self._record(parent[:i], line)
                self._record(full, line)
                self._record(table, line)
                self._skip_line()
            elif self._peek() == "[":
                self._advance()
                parts = self._read_key("]")
                self._advance()
                table = self._resolve(parts)
                for i in range(1, len(table) + 1):
                    self._record(table[:i], line)
                self._skip_line()
            else:
                parts = self._read_key("=")
                self._advance()
                path = table + parts
                for i in range(len(table) + 1, len(path) + 1):
                    self._record(path[:i], line)
                self._skip_ws(newlines=False)
                self._value(path)
                self._skip_line()

    def _value(self, path: tuple) -> None:
        c = self._peek()
        if c in "\"'":
            self._skip_string()
        elif c == "[":
            self._advance()
            index = 0
            while True:
                self._skip_ws(newlines=True)
                if self._peek() == "]":
                    self._advance()
                    return
                self._record(path + (index,), self._line)
                self._value(path + (index,))
                self._skip_ws(newlines=True)
                if self._peek() == ",":
                    self._advance()
                    index += 1
        elif c == "{":
            self._advance()
            while True:
                self._skip_ws(newlines=False)
                if self._peek() == "}":
                    self._advance()
                    return
                line = self._line
                parts = self._read_key("=")
                self._advance()
                sub = path + parts
                for i in range(len(path) + 1, len(sub) + 1):
                    self._record(sub[:i], line)
                self._skip_ws(newlines=False)
                self._value(sub)
                self._skip_ws(newlines=False)
                if self._peek() == ",":
                    self._advance()
        else:
            while self._pos < len(self.text) and self._peek() not in ",]}#\n":
                self._advance()
