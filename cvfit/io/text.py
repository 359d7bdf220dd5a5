"""Bytes to text: encoding detection, binary-file refusal, line splitting.

Line numbers reported to the user count lines as an editor does: ``\\r\\n``, ``\\n`` and a
lone ``\\r`` each end one line, and the first line is 1.
"""

from __future__ import annotations

import itertools
import re
from dataclasses import dataclass

from cvfit.errors import InputError

__all__ = [
    "DecodedText",
    "decode_bytes",
    "decode_utf8",
    "head_lines",
    "split_lines",
    "utf8_clean",
]

_BOMS: tuple[tuple[bytes, str], ...] = (
    (b"\xef\xbb\xbf", "utf-8-sig"),
    (b"\xff\xfe\x00\x00", "utf-32-le"),
    (b"\x00\x00\xfe\xff", "utf-32-be"),
    (b"\xff\xfe", "utf-16-le"),
    (b"\xfe\xff", "utf-16-be"),
)
# C0 control characters other than tab, line feed, vertical tab, form feed and carriage
# return, DEL and the C1 controls: a text export never contains them.
_CONTROL = re.compile("[\x00-\x08\x0e-\x1f\x7f-\x9f]")
_LINE_BREAK = re.compile(r"\r\n|\r|\n")
# In UTF-8 (and ASCII) a C0 control or DEL is a byte of its own and a C1 control is \xc2
# and a byte in \x80-\x9f: deleting every other byte (a C loop, much faster than searching
# the text) leaves next to nothing to search. A deletion cannot split a real control, only
# join two other bytes into a false alarm, which the exact search of the text then clears.
_UTF8_CONTROL = re.compile(rb"[\x00-\x08\x0e-\x1f\x7f]|\xc2[\x80-\x9f]")
_UTF8_SUSPECT = frozenset(
    [b for b in range(0x80) if _CONTROL.match(chr(b))] + [0xC2, *range(0x80, 0xA0)]
)
_UTF8_OTHER = bytes(b for b in range(256) if b not in _UTF8_SUSPECT)


@dataclass(frozen=True)
class DecodedText:
    """Decoded file content and the encoding that was used."""

    text: str
    encoding: str


def _utf16_without_bom(data: bytes) -> str | None:
    """``utf-16-le``/``-be`` when every other byte is NUL, as in BOM-less UTF-16 text."""
    sample = data[:4096]
    if len(sample) < 4 or len(sample) % 2:
        return None
    even, odd = sample[0::2], sample[1::2]
    if odd.count(0) > 0.9 * len(odd) and even.count(0) < 0.1 * len(even):
        return "utf-16-le"
    if even.count(0) > 0.9 * len(even) and odd.count(0) < 0.1 * len(odd):
        return "utf-16-be"
    return None


def _line_of(text: str, index: int) -> int:
    return len(_LINE_BREAK.findall(text, 0, index)) + 1


def decode_bytes(data: bytes, *, source: str) -> DecodedText:
    """Decode a text export: BOM (UTF-8/16/32), then UTF-8, then Windows-1252/Latin-1.

    Raises
    ------
    InputError
        Empty content, or content that is not text (NUL bytes, control characters,
        undecodable under a declared encoding).
    """
    if not data or data.isspace():  # no stripped copy of the whole file
        raise InputError(
            "the file is empty; export the voltammogram as delimited text", source=source
        )
    encoding = next((enc for bom, enc in _BOMS if data.startswith(bom)), None)
    if encoding is None:
        encoding = _utf16_without_bom(data)
    if encoding is not None:
        try:
            text = data.decode(encoding)
        except UnicodeDecodeError as exc:
            raise InputError(
                f"the file starts like {encoding} text but byte {exc.start} cannot be "
                "decoded; re-export it as UTF-8 text",
                source=source,
            ) from None
        text = text.lstrip("\ufeff")
    else:
        if b"\x00" in data:
            at = data.index(b"\x00")
            raise InputError(
                f"this is a binary file (NUL byte at offset {at}), not a text export; "
                "export the data as CSV or plain text",
                source=source,
                line=data.count(b"\n", 0, at) + 1,
            )
        for candidate in ("utf-8", "cp1252"):
            try:
                text = data.decode(candidate)
                break
            except UnicodeDecodeError:
                continue
        else:  # Latin-1 decodes any byte
            candidate = "latin-1"
            text = data.decode(candidate)
        encoding = candidate
    # text decoded from UTF-8 is checked in its bytes, ASCII text from elsewhere in its
    # ASCII bytes; the rest (and any alarm) by searching the text
    if encoding in ("utf-8", "utf-8-sig"):
        clean = utf8_clean(data)
    else:
        clean = text.isascii() and utf8_clean(text.encode("ascii"))
    bad = None if clean else _CONTROL.search(text)
    if bad is not None:
        raise InputError(
            f"control character 0x{ord(bad.group()):02x} found; this does not look like a "
            "text export; export the data as CSV or plain text",
            source=source,
            line=_line_of(text, bad.start()),
        )
    if not text or text.isspace():
        raise InputError(
            "the file is empty; export the voltammogram as delimited text", source=source
        )
    return DecodedText(text=text, encoding=encoding)


def utf8_clean(data: bytes) -> bool:
    """True when UTF-8 (or ASCII) *data* holds no control character but tab and the line
    breaks; False when it may (then search the decoded text)."""
    return _UTF8_CONTROL.search(data.translate(None, _UTF8_OTHER)) is None


def head_lines(content: str | bytes, n: int) -> tuple[list[str], list[int], bool]:
    """The first *n* lines (split at ``\\n``), the offset just past each, and whether
    they are all of *content*.

    Bytes (or a memoryview) are decoded as UTF-8 (``UnicodeDecodeError`` if they are not
    UTF-8) and their offsets count bytes. Only a prefix is split: splitting the whole
    content would copy all of it into the last part.
    """
    limit = 128 * n
    while True:
        chunk = content[:limit]
        whole = limit >= len(content)
        if isinstance(chunk, str):
            text = chunk
        else:
            chunk = bytes(chunk)
            if not whole:  # a character may straddle the cut, a line end cannot
                chunk = chunk[: chunk.rfind(b"\n") + 1]
            text = chunk.decode("utf-8")
        parts = text.split("\n", n)
        if whole or len(parts) > n:
            break
        limit *= 4
    complete = whole and (len(parts) <= n or not parts[n])
    head = parts if len(parts) <= n else parts[:n]
    if head and head[-1] == "":
        head.pop()
    if isinstance(content, str) or text.isascii():
        ends = list(itertools.accumulate(len(p) + 1 for p in head))
    else:
        ends = list(itertools.accumulate(len(p.encode("utf-8")) + 1 for p in head))
    return head, ends, complete


def split_lines(text: str) -> list[str]:
    """Lines as an editor numbers them (``lines[k]`` is line ``k + 1``)."""
    lines = _LINE_BREAK.split(text) if "\r" in text else text.split("\n")
    if lines and lines[-1] == "":
        lines.pop()
    return lines


def decode_utf8(raw: bytes, *, source: str, what: str) -> str:
    """*raw* as UTF-8 text (a byte-order mark dropped), for files the user writes by hand
    (a manifest, a files table).

    Raises
    ------
    InputError
        Not UTF-8: the byte and its line, and to save *what* as UTF-8.
    """
    try:
        return raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise InputError(
            f"the {what} is not UTF-8 text (byte {exc.start}); save it as UTF-8",
            source=source,
            line=raw.count(b"\n", 0, exc.start) + 1,
        ) from None
