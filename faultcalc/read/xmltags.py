"""Every tag of an XML part found at once with numpy: the primitives of the light pass.

``Tags`` holds where each tag's '<' and '>' are, and the bytes from any place as numbers, so that
``sheetgrid.py`` and ``sheetbytes.py`` check a worksheet on whole arrays (no Python call per
XML element). A tag is named by its index into ``Tags.lt`` (the tags in file order), a place in
the part by its byte position. Anything not in the plain form these read raises ``Irregular``.
"""

from __future__ import annotations

import functools
import re

import numpy as np

MAIN = b"http://schemas.openxmlformats.org/spreadsheetml/2006/main"
PAD = b"\0" * 32  # so that a window read past the last byte stays in the array
DELIM = np.zeros(256, dtype=bool)  # what may follow a tag's name
DELIM[list(b" \t\r\n/>")] = True
_NAME = re.compile(rb"[^ \t\r\n/>]*")  # a tag's name, up to its first delimiter
# bytes taken 8 at a time (``digits``)
_EIGHT = np.uint64(8)
_ONES = np.uint64(0x0101010101010101)
_ZEROS = _ONES * np.uint64(48)  # '0' in every byte
_HIGH = _ONES * np.uint64(128)
_LOW7 = _ONES * np.uint64(127)
_PAIRS = np.uint64(0x000000FF000000FF)
_MUL1 = np.uint64(100 + (1_000_000 << 32))
_MUL2 = np.uint64(1 + (10_000 << 32))


class Irregular(Exception):
    """The part is not in the form the light pass reads; ``str()`` says what it saw."""


def key(text: bytes) -> np.uint64:
    """Up to 8 bytes as the number ``Tags.words`` gives where they begin (the rest masked)."""
    return np.uint64(int.from_bytes(text, "little"))


def mask(length: int) -> np.uint64:
    return np.uint64((1 << (8 * length)) - 1)


class Tags:
    """Every tag of a part: where its '<' is and its second byte, at once; where its '>' is
    when first asked (``gt``). ``words`` gives the 8 bytes from any position as one number."""

    def __init__(self, data: bytes):
        n = len(data)
        self.data = data
        padded = data + PAD
        self.a = a = np.frombuffer(padded, np.uint8)
        # the 8 bytes from each position as one little-endian number (a view, not a copy)
        self.words = words(self.a)
        self.lt = lt = np.flatnonzero(a[:n] == 60)
        self.second = second = a[lt + 1]
        if (second == 33).any():  # <!DOCTYPE, <!ENTITY, <!-- -->, <![CDATA[
            raise Irregular("a declaration, comment or CDATA section")
        self.closing = int((second == 47).sum())
        self.elements = len(lt) - self.closing - int((second == 63).sum())

    @functools.cached_property
    def third(self) -> np.ndarray:
        return self.a[self.lt + 2]

    @functools.cached_property
    def gt(self) -> np.ndarray:
        return np.flatnonzero(self.a[: len(self.data)] == 62)

    @functools.cached_property
    def simple(self) -> bool:
        """Each '<' closed by a '>' before the next '<' (none in a text or an attribute): the
        '>' of tag k is then gt[k]."""
        lt, gt = self.lt, self.gt
        return len(gt) == len(lt) and bool((gt > lt).all()) and bool((gt[:-1] < lt[1:]).all())

    def check_pairs(self) -> None:
        """Irregular unless every start tag is closed (an end tag, or '/>')."""
        if self.elements - int((self.a[self.gt - 1] == 47).sum()) != self.closing:
            raise Irregular("tags that do not pair")

    def span(self, start: int, end: int) -> tuple[int, int]:
        """The indices of the tags from byte ``start`` to byte ``end``: [first, stop)."""
        first, stop = np.searchsorted(self.lt, [start, end])
        return int(first), int(stop)

    def find(self, name: bytes, span: tuple[int, int] | None = None) -> np.ndarray:
        """Indices of the start tags <name (followed by white space, / or >), in a span."""
        text = b"<" + name
        first, stop = span or (0, len(self.lt))
        hit = np.flatnonzero(self.second[first:stop] == text[1]) + first
        at = self.lt[hit]
        words = self.words[at]
        if len(text) < 8:  # the byte after the name is in the same 8
            after = (words >> np.uint64(8 * len(text))) & mask(1)
            return hit[((words & mask(len(text))) == key(text)) & DELIM[after]]
        at = at[words == key(text[:8])]
        at = at[[self.data.startswith(text, p) for p in at.tolist()]]
        return np.searchsorted(self.lt, at[DELIM[self.a[at + len(text)]]])

    def named(self, name: bytes) -> np.ndarray:
        """Positions of the start tags <name in the whole part."""
        return self.lt[self.find(name)]

    def exactly(self, text: bytes, span: tuple[int, int]) -> np.ndarray:
        """Indices of the tags beginning with ``text`` (3 to 8 bytes) in a span."""
        first, stop = span
        chosen = (self.second[first:stop] == text[1]) & (self.third[first:stop] == text[2])
        hit = np.flatnonzero(chosen) + first
        return hit[(self.words[self.lt[hit]] & mask(len(text))) == key(text)]

    def ends(self, index: np.ndarray) -> np.ndarray:
        """Position of the '>' that closes each tag of ``index``."""
        if self.simple:
            return self.gt[index]
        return self.gt[np.searchsorted(self.gt, self.lt[index])]

    def prefixed(self, end: int) -> bool:
        """Whether a tag before byte ``end`` has a prefixed name: a colon with its tag's '<'
        before it and no delimiter between (a colon in an attribute or a text has one:
        x14ac:dyDescent, xml:space are fine). Each colon is looked at over the 32 bytes before
        it; one with neither a '<' nor a delimiter there, from its tag's '<'."""
        a = self.a
        colons = np.flatnonzero(a[:end] == 58)
        if not len(colons):
            return False
        width = len(PAD)
        window = windows(a, np.maximum(colons - width, 0), width)
        opened, ended = window == 60, DELIM[window]
        near = np.flatnonzero(colons < width)  # the window runs past the colon
        if len(near):
            past = np.arange(width) >= colons[near, None]
            opened[near] &= ~past
            ended[near] &= ~past
        last = width - 1 - np.arange(width)  # the last '<' and delimiter in each window
        last_open = np.where(opened.any(axis=1), last[opened[:, ::-1].argmax(axis=1)], -1)
        last_end = np.where(ended.any(axis=1), last[ended[:, ::-1].argmax(axis=1)], -1)
        if (last_open > last_end).any():
            return True
        far = colons[(last_open < 0) & (last_end < 0)]  # deep in a name or a text
        k = np.searchsorted(self.lt, far) - 1
        far, tag = far[k >= 0], self.lt[k[k >= 0]]
        if not len(far):
            return False
        tags, which = np.unique(tag, return_inverse=True)
        names = [_NAME.match(self.data, t + 1).end() for t in tags.tolist()]
        return bool((far < np.array(names)[which]).any())


def element_count(data: bytes) -> int:
    """XML elements of a part (start and empty tags); Irregular if it holds a declaration,
    comment or CDATA section, or its tags do not pair."""
    tags = Tags(data)
    tags.check_pairs()
    return tags.elements


def windows(a: np.ndarray, starts: np.ndarray, width: int) -> np.ndarray:
    """The ``width`` bytes from each start, one row each (copied row by row, no index array)."""
    return np.lib.stride_tricks.sliding_window_view(a, width)[starts]


def digits(a: np.ndarray, starts: np.ndarray, width: int, zero: bool = False):
    """Decimal numbers at ``starts``, each closed by a quote within ``width`` bytes (at most 8):
    the values and whether every one is so (no leading zero unless ``zero``).

    Each start's 8 bytes are read as one number and worked on whole (no loop over digits):
    the digits end at the first byte that is not one; shifted to the top, after zeros, they
    are the number's 8-digit form, read in three multiplications (the usual way of parsing 8
    digits at once, as in D. Lemire's fast_float).
    """
    w = words(a)[starts]
    x = w ^ _ZEROS  # each digit byte holds its digit's value, every other byte 10 or more
    other = _at_least(x, 10)  # the high bit of each byte that is not a digit
    first = other & (~other + np.uint64(1))  # the first of them, 0 if none
    count = ((np.frexp(first.astype(np.float64))[1] - 8) // 8).astype(np.uint64)
    count = np.where(first == 0, np.uint64(8), count)  # digits before it
    shift = _EIGHT * np.minimum(count, np.uint64(7))
    ok = (count >= 1) & (count < width) & (((w >> shift) & mask(1)) == 34)
    ok &= ((w & mask(1)) != 48) | (zero & (count == 1))
    number = (x & ((np.uint64(1) << shift) - np.uint64(1))) << (
        _EIGHT * (_EIGHT - np.maximum(count, np.uint64(1)))
    )
    number = number * np.uint64(10) + (number >> _EIGHT)  # pairs of digits
    number = ((number & _PAIRS) * _MUL1 + ((number >> np.uint64(16)) & _PAIRS) * _MUL2) >> (
        np.uint64(32)
    )
    return number.astype(np.int64), bool(ok.all())


def words(a: np.ndarray) -> np.ndarray:
    """The 8 bytes from each position of a padded array as one little-endian number (a view)."""
    return np.ndarray((len(a) - 7,), "<u8", a, 0, (1,))


def _at_least(x: np.ndarray, n: int) -> np.ndarray:
    """The high bit of each byte of ``x`` that is ``n`` (1 to 128) or more."""
    return (((x & _LOW7) + _ONES * np.uint64(128 - n)) | x) & _HIGH


def inside(starts: np.ndarray, ends: np.ndarray, points: np.ndarray) -> np.ndarray:
    """Index of the span [starts[k], ends[k]) holding each point, or -1."""
    k = np.searchsorted(starts, points, side="right") - 1
    held = (k >= 0) & (points < ends[np.maximum(k, 0)])
    return np.where(held, k, -1)


def owners(points: np.ndarray, starts: np.ndarray) -> np.ndarray:
    """Index of the last start before each point (points before the first are dropped)."""
    k = np.searchsorted(starts, points, side="right") - 1
    return k[k >= 0]
