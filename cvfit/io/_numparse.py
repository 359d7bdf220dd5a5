"""Compiled parser of the numeric block of a delimited export (private).

:func:`parse_numbers` reads rows of numbers straight from the bytes of a file, with no
Python object per line or cell. It accepts only plain rows and answers ``None`` for
anything else, so the caller falls back to ``pandas.read_csv`` and, behind it, to the
line-by-line path that names the bad line: every message and every unusual-file result
stays that of those paths.

Accepted, per row: ``ncols`` cells separated by the delimiter (``,``, ``;``, tab) or, for
``"whitespace"``, by runs of blanks and tabs; blanks (and tabs, unless tab is the
delimiter) around a cell; the row ends in ``\\n`` or ``\\r\\n`` (the last one may have
none). A cell is ``[+-]digits[.digits][e[+-]digits]`` with ``.`` or ``,`` as the decimal
mark and digits on at least one side of it (``5``, ``5.``, ``.5``, ``1E+05``). Refused:
quotes, ``nan``/``inf`` text, empty cells and blank lines, a wrong cell count, a lone
``\\r``, any other byte (non-ASCII included), more than 19 significant digits, an exponent
beyond ±9999, and a ``+`` cell with blanks in it outside Clinger's range (pandas reads such
a cell with a converter that is not correctly rounded).

Values are correctly rounded (round-half-even of the exact decimal). A mantissa of at
most 2**53 with a decimal exponent within ±22 takes Clinger's exact path (one rounded
multiplication or division of exact operands); the rest takes the Eisel–Lemire algorithm
on a 64-bit mantissa with 128-bit truncated powers of five, which is exact wherever it
decides and hands the rare undecided cell back (the whole block is then refused). The
pandas in use (3.x) converts correctly rounded too (but for the ``+`` case above), so both
paths give bit-identical tables (the tests compare bits); a converter that is not
correctly rounded (pandas 2's default) can differ from this one outside Clinger's range
(by about an ulp); inside it both are exact.

numba is optional: without it :func:`parse_numbers` always answers ``None``. The compiled
code is cached on disk (``cache=True``), so it is compiled once per installation.

References
----------
Clinger, W. D. How to read floating point numbers accurately. PLDI 1990, 92-101.
Lemire, D. Number parsing at a gigabyte per second. Softw. Pract. Exper. 51 (2021) 1700.
Mushtak, N.; Lemire, D. Fast number parsing without fallback. Softw. Pract. Exper. 53
(2023) 1467.
"""

from __future__ import annotations

import math

import numpy as np

try:  # optional accelerator; results never depend on it
    import numba as _numba
except ImportError:  # pragma: no cover - exercised where numba is absent
    _numba = None

__all__ = ["HAVE_NUMBA", "parse_numbers", "warm_up"]

HAVE_NUMBA = _numba is not None

_WHITESPACE = 0  # delimiter code for runs of blanks and tabs
_DELIMITERS = {",": ord(","), ";": ord(";"), "\t": ord("\t"), "whitespace": _WHITESPACE}
_MAX_DIGITS = 19  # a 19-digit mantissa fits in 64 bits: Eisel–Lemire is exact on it
_MAX_EXPONENT = 9999


def _jit(func):
    """*func* compiled by numba, its machine code cached on disk (``cache=True``: the
    compile cost is paid once per installation); *func* itself without numba."""
    global HAVE_NUMBA
    if HAVE_NUMBA:
        try:
            return _numba.njit(cache=True, nogil=True)(func)
        except RuntimeError:  # nowhere to write the cache: compiling in every process
            HAVE_NUMBA = False  # would cost seconds, so the importer takes pandas
    return func


def _powers_of_five() -> np.ndarray:
    """128-bit truncated 5**q (high, low words), q = -342 … 308, as Lemire tabulates them."""
    out = np.empty((651, 2), dtype=np.uint64)
    for k, q in enumerate(range(-342, 309)):
        if q < 0:
            p5 = 5**-q
            z = (p5 - 1).bit_length()  # smallest z with 2**z >= 5**-q
            c = (1 << (z + 127 if q >= -27 else 2 * z + 128)) // p5 + 1
            c >>= max(0, c.bit_length() - 128)
        else:
            c = 5**q
            bits = c.bit_length()
            c = c << (128 - bits) if bits < 128 else c >> (bits - 128)
        out[k, 0], out[k, 1] = c >> 64, c & 0xFFFFFFFFFFFFFFFF
    return out


_POW5 = _powers_of_five()
_POW10 = np.array([10.0**k for k in range(23)])  # exact doubles
_U32 = np.uint64(32)
_LOW32 = np.uint64(0xFFFFFFFF)
_ONE = np.uint64(1)
_ALL = np.uint64(0xFFFFFFFFFFFFFFFF)


@_jit
def _mul128(a, b):
    """High and low 64-bit words of the 128-bit product of two uint64."""
    a_lo, a_hi = a & _LOW32, a >> _U32
    b_lo, b_hi = b & _LOW32, b >> _U32
    p0, p1, p2 = a_lo * b_lo, a_lo * b_hi, a_hi * b_lo
    mid = (p0 >> _U32) + (p1 & _LOW32) + (p2 & _LOW32)
    low = (p0 & _LOW32) | (mid << _U32)
    high = a_hi * b_hi + (p1 >> _U32) + (p2 >> _U32) + (mid >> _U32)
    return high, low


@_jit
def _leading_zeros(w):
    n = 0
    for shift in (32, 16, 8, 4, 2, 1):
        if w >> np.uint64(64 - shift) == 0:
            w <<= np.uint64(shift)
            n += shift
    return n


@_jit
def _eisel_lemire(w, q):
    """Correctly rounded ``w * 10**q`` for 0 < w < 2**64; (value, False) if undecided."""
    if q < -342:
        return 0.0, True
    if q > 308:
        return np.inf, True
    lz = _leading_zeros(w)
    w <<= np.uint64(lz)
    k = q + 342
    high, low = _mul128(w, _POW5[k, 0])
    if high & np.uint64(0x1FF) == np.uint64(0x1FF):  # 55 bits of precision needed
        high2, _ = _mul128(w, _POW5[k, 1])
        low += high2
        if high2 > low:
            high += _ONE
    if low == _ALL and (q < -27 or q > 55):  # cannot decide (never seen; be safe)
        return 0.0, False
    upper = np.int64(high >> np.uint64(63))
    shift = np.uint64(upper + 9)
    mantissa = high >> shift
    power2 = (((152170 + 65536) * q) >> 16) + 63 + upper - lz + 1023
    if power2 <= 0:  # subnormal (or zero)
        if 1 - power2 >= 64:
            return 0.0, True
        mantissa >>= np.uint64(1 - power2)
        mantissa += mantissa & _ONE
        mantissa >>= _ONE
        # mantissa * 2**-1074, exact (2**52 here is the smallest normal number)
        return math.ldexp(float(mantissa), -1074), True
    if low <= _ONE and -4 <= q <= 23 and mantissa & np.uint64(3) == _ONE:
        if mantissa << shift == high:  # exactly half way: round to even
            mantissa &= ~_ONE
    mantissa += mantissa & _ONE
    mantissa >>= _ONE
    if mantissa >= (np.uint64(2) << np.uint64(52)):
        mantissa = _ONE << np.uint64(52)
        power2 += 1
    if power2 >= 0x7FF:
        return np.inf, True
    # the 53-bit significand (implicit bit included) times its power of two, exact
    return math.ldexp(float(mantissa), power2 - 1075), True


_TEN = np.uint64(10)
_ZERO_CHAR = np.uint64(48)
_EXACT_INT = np.uint64(1 << 53)


@_jit
def _byte(buf, i):
    # an unsigned index spares the negative-index test numba makes on every byte read
    return buf[np.uint64(i)]


@_jit
def _parse_rows(buf, i, end, ncols, delim, dec, out, row):
    """Rows of ``buf[i:end]`` (``buf[end - 1]`` is a line feed) into ``out[:, row:]``.

    Returns the next free row and whether every row was plain; the final line feed stops
    every inner loop, so no loop needs a bounds check.
    """
    pad_tab = delim != 9
    col = 0
    while i < end:
        cell = i
        c = _byte(buf, i)
        while c == 32 or (c == 9 and pad_tab):
            i += 1
            c = _byte(buf, i)
        padded = i > cell and delim != _WHITESPACE
        neg = c == 45
        plus = c == 43
        if neg or plus:
            i += 1
            c = _byte(buf, i)
        first = i
        while c == 48:  # leading zeros are not significant digits
            i += 1
            c = _byte(buf, i)
        sig = i
        w = np.uint64(0)
        while 48 <= c <= 57:
            w = w * _TEN + (np.uint64(c) - _ZERO_CHAR)
            i += 1
            c = _byte(buf, i)
        n_sig = i - sig
        n_all = i - first
        q = 0
        if c == dec:
            i += 1
            c = _byte(buf, i)
            frac = i
            if n_sig == 0:
                while c == 48:
                    i += 1
                    c = _byte(buf, i)
            sig = i
            while 48 <= c <= 57:
                w = w * _TEN + (np.uint64(c) - _ZERO_CHAR)
                i += 1
                c = _byte(buf, i)
            n_sig += i - sig
            n_all += i - frac
            q = frac - i
        if n_all == 0 or n_sig > _MAX_DIGITS:
            return row, False
        if c == 101 or c == 69:  # e, E
            i += 1
            c = _byte(buf, i)
            eneg = c == 45
            if eneg or c == 43:
                i += 1
                c = _byte(buf, i)
            e = 0
            estart = i
            while 48 <= c <= 57:
                if e <= _MAX_EXPONENT:
                    e = e * 10 + (c - 48)
                i += 1
                c = _byte(buf, i)
            if i == estart or e > _MAX_EXPONENT:
                return row, False
            q = q - e if eneg else q + e
        exact = w == 0 or (w <= _EXACT_INT and -22 <= q <= 22)
        if w == 0:
            x = 0.0
        elif exact:  # Clinger: exact operands, one rounding
            x = float(w)
            x = x * _POW10[q] if q >= 0 else x / _POW10[-q]
        else:
            x, decided = _eisel_lemire(w, q)
            if not decided:
                return row, False
        if neg:
            x = -x
        after = i
        while c == 32 or (c == 9 and pad_tab):
            i += 1
            c = _byte(buf, i)
        # pandas reads a '+' cell with blanks in it by a converter that is not correctly
        # rounded: such a cell is taken only where every converter is exact
        if plus and not exact and (padded or (i > after and delim != _WHITESPACE)):
            return row, False
        if col >= ncols or row >= out.shape[1]:
            return row, False
        out[np.uint64(col), np.uint64(row)] = x  # unsigned: no wraparound test
        col += 1
        if c == 10 or c == 13:
            if c == 13:
                if _byte(buf, i + 1) != 10:  # a lone carriage return
                    return row, False
                i += 1
            i += 1
            if col != ncols:
                return row, False
            row += 1
            col = 0
        elif delim == _WHITESPACE:
            if i == after:  # no blank after the number: a stray character
                return row, False
        elif c == delim:
            i += 1
        else:
            return row, False
    return row, True


@_jit
def _parse(buf, start, ncols, delim, dec):
    """The rows from ``buf[start:]`` as a (ncols, rows) array, and whether all were plain."""
    n = buf.shape[0]
    end = n
    while end > start and buf[end - 1] != 10:
        end -= 1
    tail = n - end  # a last line without a line end
    # room for the most rows the bytes can hold (a cell and a separator each at least one
    # byte): cheaper than counting the lines first; pages never written cost nothing
    out = np.empty((ncols, (end - start) // (2 * ncols) + (1 if tail else 0)))
    row, ok = _parse_rows(buf, start, end, ncols, delim, dec, out, 0)
    if ok and tail:
        if buf[n - 1] == 13:  # a lone carriage return ends the file
            return out, False
        last = np.empty(tail + 1, dtype=np.uint8)
        last[:tail] = buf[end:]
        last[tail] = 10
        row, ok = _parse_rows(last, 0, tail + 1, ncols, delim, dec, out, row)
    return out[:, :row], ok


def parse_numbers(
    data: bytes, start: int, ncols: int, delimiter: str, decimal: str
) -> np.ndarray | None:
    """The numeric block ``data[start:]`` as a (rows, ncols) float array, or None.

    Parameters
    ----------
    data : bytes
        The file's bytes (or the block's, UTF-8 encoded); not copied.
    start : int
        Offset of the first data row.
    ncols : int
        Cells per row.
    delimiter : {",", ";", "\\t", "whitespace"}
        What separates the cells.
    decimal : {".", ","}
        The decimal mark.

    Returns
    -------
    ndarray or None
        The values (each column contiguous), or None when numba is not installed or
        anything in the block is not a plain row of numbers.
    """
    code = _DELIMITERS.get(delimiter)
    if not HAVE_NUMBA or code is None or decimal not in (".", ",") or ncols < 1:
        return None
    if code == ord(decimal) or start >= len(data):
        return None
    values, ok = _parse(np.frombuffer(data, dtype=np.uint8), start, ncols, code, ord(decimal))
    return values.T if ok else None


def warm_up() -> bool:
    """Load the compiled parser now (~0.1-0.3 s once per process), e.g. in a parent
    process before it forks workers, which then inherit it; False without numba."""
    return parse_numbers(b"0\n", 0, 1, ",", ".") is not None
