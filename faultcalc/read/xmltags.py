"""Every tag of an XML part found at once with numpy: the primitives of the light pass.

``Tags`` holds where each tag's '<' and '>' are and its first 8 bytes as one number, so that
``sheetgrid.py`` and ``sheetbytes.py`` check a worksheet on whole arrays (no Python call per
XML element). A tag is named by its index into ``Tags.lt`` (the tags in file order), a place in
the part by its byte position. Anything not in the plain form these read raises ``Irregular``.
"""

from __future__ import annotations

import functools

import numpy as np

MAIN = b"http://schemas.openxmlformats.org/spreadsheetml/2006/main"
PAD = b"\0" * 32  # so that a window read past the last byte stays in the array
DELIM = np.zeros(256, dtype=bool)  # what may follow a tag's name
DELIM[list(b" \t\r\n/>")] = True


class Irregular(Exception):
    """The part is not in the form the light pass reads; ``str()`` says what it saw."""


def key(text: bytes) -> np.uint64:
    """Up to 8 bytes as the number ``Tags.key`` holds for a tag beginning with them."""
    return np.uint64(int.from_bytes(text, "little"))


def mask(length: int) -> np.uint64:
    return np.uint64((1 << (8 * length)) - 1)


class Tags:
    """Every tag of a part: where its '<' is and its second byte, at once; where its '>' is
    and its first 8 bytes as one number, when first asked (``gt``, ``key``)."""

    def __init__(self, data: bytes):
        n = len(data)
        self.data = data
        padded = data + PAD
        self.a = a = np.frombuffer(padded, np.uint8)
        # the 8 bytes from each position as one little-endian number (a view, not a copy)
        self.words = np.ndarray((n + 1,), "<u8", padded, 0, (1,))
        self.lt = lt = np.flatnonzero(a[:n] == 60)
        self.second = second = a[lt + 1]
        if (second == 33).any():  # <!DOCTYPE, <!ENTITY, <!-- -->, <![CDATA[
            raise Irregular("a declaration, comment or CDATA section")
        self.closing = int((second == 47).sum())
        self.elements = len(lt) - self.closing - int((second == 63).sum())

    @functools.cached_property
    def key(self) -> np.ndarray:
        return self.words[self.lt]

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
        words = self.words[self.lt[hit]]
        if len(text) <= 8:
            hit = hit[(words & mask(len(text))) == key(text)]
        else:
            hit = hit[words == key(text[:8])]
            hit = hit[[self.data.startswith(text, p) for p in self.lt[hit].tolist()]]
        return hit[DELIM[self.a[self.lt[hit] + len(text)]]]

    def named(self, name: bytes) -> np.ndarray:
        """Positions of the start tags <name in the whole part."""
        return self.lt[self.find(name)]

    def exactly(self, text: bytes, span: tuple[int, int]) -> np.ndarray:
        """Indices of the tags beginning with ``text`` (up to 8 bytes) in a span."""
        first, stop = span
        return np.flatnonzero((self.key[first:stop] & mask(len(text))) == key(text)) + first

    def ends(self, index: np.ndarray) -> np.ndarray:
        """Position of the '>' that closes each tag of ``index``."""
        if self.simple:
            return self.gt[index]
        return self.gt[np.searchsorted(self.gt, self.lt[index])]

    def prefixed(self, start: int, end: int) -> bool:
        """Whether a tag beginning between ``start`` and ``end`` has a prefixed name (a colon
        before the first delimiter after its '<': a colon in an attribute or a text has one
        before it), or a name longer than any the format has; prefixed attributes (xml:space,
        x14ac:dyDescent) are fine."""
        a, lt = self.a, self.lt
        colons = np.flatnonzero(a[start:end] == 58) + start
        k = np.searchsorted(lt, colons) - 1
        colons, opened = colons[k >= 0], lt[k[k >= 0]]
        colons, opened = colons[opened >= start], opened[opened >= start]
        if not len(colons):
            return False
        reach = np.arange(1, 1 + len(PAD))  # the window stays in the padded array
        named = DELIM[windows(a, opened + 1, len(PAD))] & (reach < (colons - opened)[:, None])
        return bool((~named.any(axis=1)).any())


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
    """Decimal numbers of up to ``width`` digits at ``starts``, each closed by a quote: the
    values and whether every one is so (no leading zero unless ``zero``)."""
    values = np.zeros(len(starts), dtype=np.int64)
    count = np.zeros(len(starts), dtype=np.int64)
    alive = np.ones(len(starts), dtype=bool)
    for j in range(width):
        byte = a[starts + j]
        alive &= (byte >= 48) & (byte <= 57)
        values = np.where(alive, values * 10 + (byte.astype(np.int64) - 48), values)
        count += alive
    ok = (count >= 1) & ~alive & (a[starts + count] == 34)  # closed within the width
    first = a[starts]
    ok &= (first != 48) | (zero & (count == 1))
    return values, bool(ok.all())


def inside(starts: np.ndarray, ends: np.ndarray, points: np.ndarray) -> np.ndarray:
    """Index of the span [starts[k], ends[k]) holding each point, or -1."""
    k = np.searchsorted(starts, points, side="right") - 1
    held = (k >= 0) & (points < ends[np.maximum(k, 0)])
    return np.where(held, k, -1)


def owners(points: np.ndarray, starts: np.ndarray) -> np.ndarray:
    """Index of the last start before each point (points before the first are dropped)."""
    k = np.searchsorted(starts, points, side="right") - 1
    return k[k >= 0]
