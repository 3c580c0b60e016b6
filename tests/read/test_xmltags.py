"""The byte-level primitives of the light pass (faultcalc/read/xmltags.py) against plain Python.

The expected values are Python's own reading of the same bytes (``int()`` of the digits, a
regular expression for the form): the definition, no source.
"""

from __future__ import annotations

import re

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

from faultcalc.read import xmltags

# bytes a number's text and what follows it are made of, in the light pass's inputs
ALPHABET = b'0123456789"x /.-\x80\xff'


def read_plainly(text: bytes, width: int, zero: bool) -> int | None:
    """The number ``digits`` should find at the start of ``text``, or None."""
    m = re.match(rb'(\d+)"', text)
    if m is None or len(m.group(1)) >= width:
        return None
    if m.group(1).startswith(b"0") and not (zero and m.group(1) == b"0"):
        return None
    return int(m.group(1))


@settings(max_examples=300, deadline=None)
@given(
    texts=st.lists(st.binary(max_size=12).map(lambda b: bytes(ALPHABET[x % 16] for x in b))),
    width=st.integers(2, 8),
    zero=st.booleans(),
)
def test_digits_read_as_python_reads_them(texts, width, zero):
    data = b"".join(texts)
    starts = np.cumsum([0] + [len(t) for t in texts[:-1]], dtype=np.int64)
    a = np.frombuffer(data + xmltags.PAD, np.uint8)
    values, ok = xmltags.digits(a, starts, width, zero)
    expected = [read_plainly(data[s:], width, zero) for s in starts.tolist()]
    assert ok == all(e is not None for e in expected)
    for value, wanted in zip(values.tolist(), expected, strict=True):
        assert wanted is None or value == wanted


def test_digits_of_every_row_number():
    # the row numbers of Excel's grid (1 to 1,048,576; Microsoft, "Excel specifications and
    # limits"), each closed by a quote: read as Python's int() reads them, up to 7 digits
    numbers = np.arange(1, 1_048_577)
    data = b"".join(b'%d"' % n for n in numbers.tolist())
    sizes = np.array([len(b'%d"' % n) for n in numbers.tolist()])
    starts = np.concatenate([[0], np.cumsum(sizes)[:-1]])
    a = np.frombuffer(data + xmltags.PAD, np.uint8)
    values, ok = xmltags.digits(a, starts, 8)
    assert ok and (values == numbers).all()
    assert not xmltags.digits(a, starts, 7)[1]  # 1,000,000 on: 7 digits, not within 7 bytes


def prefixed_plainly(data: bytes) -> bool:
    """Whether a tag's name (after its '<', up to the first delimiter) holds a colon."""
    return any(b":" in m.group(1) for m in re.finditer(rb"<([^ \t\r\n/>]*)", data))


@settings(max_examples=300, deadline=None)
@given(
    pieces=st.lists(
        st.sampled_from([b"<", b">", b":", b" ", b"/", b"a", b"x14ac", b'="1"', b"t" * 40])
    )
)
def test_prefixed_names_found_as_python_finds_them(pieces):
    # colons in names, attributes and texts, near the start and far from any '<' or delimiter
    data = b"".join(pieces)
    assert xmltags.Tags(data).prefixed(len(data)) == prefixed_plainly(data)
