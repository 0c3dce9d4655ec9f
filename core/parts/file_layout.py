"""How a drawer file was written (encoding and BOM, line endings, each record's text), so a
save writes back what Tickbin does not interpret."""

from __future__ import annotations

import codecs
from dataclasses import dataclass, field

_CP1252_GAPS = frozenset(b"\x81\x8d\x8f\x90\x9d")
"""Bytes Windows-1252 leaves undefined; kept as the same-numbered code point (Latin-1)."""


def _keep_byte(error: UnicodeError) -> tuple[str | bytes, int]:
    """Codec error handler: a cp1252 gap byte and its Latin-1 character map to each other."""
    if isinstance(error, UnicodeDecodeError):
        return "".join(chr(b) for b in error.object[error.start:error.end]), error.end
    if isinstance(error, UnicodeEncodeError):
        text = error.object[error.start:error.end]
        if all(ord(ch) in _CP1252_GAPS for ch in text):
            return bytes(ord(ch) for ch in text), error.end
    raise error


KEEP_BYTE = "tickbin-keep-byte"
"""The codec error handler to encode a drawer's text with (a cp1252 gap byte written back)."""
codecs.register_error(KEEP_BYTE, _keep_byte)


def encoding_of(data: bytes) -> str:
    """UTF-8 with or without a BOM, else Windows-1252 (what spreadsheets on Windows save)."""
    try:
        data.decode("utf-8")
    except UnicodeDecodeError:
        return "cp1252"
    return "utf-8-sig" if data.startswith(codecs.BOM_UTF8) else "utf-8"


def decode(data: bytes) -> str:
    """A drawer file's text: every byte decodes, and encodes back to itself (``KEEP_BYTE``)."""
    return data.decode(encoding_of(data), errors=KEEP_BYTE)


@dataclass
class FileRecord:
    """One CSV record as the file holds it: its text (line ending included) and the
    cell values read from it, by position."""

    raw: str
    cells: list[str]

    @property
    def ending(self) -> str:
        return self.raw[len(self.raw.rstrip("\r\n")):]


@dataclass
class FileLayout:
    """How a drawer file was written, so a save writes back what it does not interpret:
    encoding and BOM, line endings, the header's spelling, comment and blank lines,
    quoting and spacing of every cell that was not edited."""

    encoding: str
    delimiter: str
    newline: str
    header: FileRecord
    columns: list[str]
    records: dict[int, FileRecord] = field(default_factory=dict)
    """Data records by the line they start on."""
    notes: list[tuple[int | None, str]] = field(default_factory=list)
    """Comment and blank lines: (line of the record they precede or None at the end, text)."""

