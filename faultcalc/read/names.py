"""What a name or a free text from the input may hold, and when two names are one name.

Names (a sheet's id column and every bus reference) end up as sheet titles, CSV fields,
netlist comments and terminal output, so they hold no control character: none of C0 (tab and
line ends included), DEL, C1, the line and paragraph separators U+2028/U+2029, nor the
bidirectional embedding, override and isolate marks (U+202A to U+202E, U+2066 to U+2069), which
change how the text after them is shown. Free text (descriptions, the title, case names, notes)
may hold tabs and line ends; the other C0 controls are refused there too, because no workbook
can hold them.

Two names are one name when they agree after removing the invisible characters (zero-width
space, non-joiner and joiner, word joiner, byte order mark, soft hyphen, left-to-right and
right-to-left marks), Unicode NFKC normalisation (full-width and other compatibility forms
become the plain character) and case folding: such names look the same to a reader.

>>> name_problem("SWBD-1") is None
True
>>> name_problem("SWBD\\n.control")
"a name may not hold control characters or line breaks (here '\\\\n' at position 5)"
>>> key("SWBD\\u200b-1") == key("swbd-1") == key("\\uff33WBD-1")
True
"""

from __future__ import annotations

import re
import unicodedata

# Control characters a name may not hold (see the module docstring), as code point ranges.
NAME_FORBIDDEN = ((0x00, 0x1F), (0x7F, 0x9F), (0x2028, 0x2029), (0x202A, 0x202E), (0x2066, 0x2069))
# What no workbook can hold (XML 1.0): C0 controls other than tab, line feed, carriage return.
TEXT_FORBIDDEN = ((0x00, 0x08), (0x0B, 0x0C), (0x0E, 0x1F))
# Characters that show as nothing: removed before names are compared.
INVISIBLE = "\u200b\u200c\u200d\u2060\ufeff\u00ad\u200e\u200f"
_DROP = dict.fromkeys(map(ord, INVISIBLE))


def character_class(ranges, escape) -> str:
    """A regular-expression class of the code point ``ranges``, each written by ``escape``
    (Python's re and Arrow's RE2 spell code points differently)."""
    return "[" + "".join(f"{escape(a)}-{escape(b)}" for a, b in ranges) + "]"


_NAME_FORBIDDEN = re.compile(character_class(NAME_FORBIDDEN, lambda c: f"\\U{c:08x}"))
_TEXT_FORBIDDEN = re.compile(character_class(TEXT_FORBIDDEN, lambda c: f"\\U{c:08x}"))


def _where(match: re.Match) -> str:
    return f"{match.group()!r} at position {match.start() + 1}"


def name_problem(name: str) -> str | None:
    """What is wrong with ``name`` as a name, or None."""
    found = _NAME_FORBIDDEN.search(name)
    if found is not None:
        return f"a name may not hold control characters or line breaks (here {_where(found)})"
    if not name.translate(_DROP).strip():
        return "a name needs a visible character; this one holds only invisible ones"
    return None


def text_problem(text: str) -> str | None:
    """What is wrong with ``text`` as free text, or None."""
    found = _TEXT_FORBIDDEN.search(text)
    if found is None:
        return None
    return (
        f"the text holds a control character ({_where(found)}), which a workbook cannot "
        "hold; remove it (tabs and line breaks may stay)"
    )


def any_problem(names) -> bool:
    """True when any of ``names`` (strings or None) is not a valid name."""
    return any(n is not None and name_problem(n) for n in names)


def key(name: str) -> str:
    """The form two names are compared in: invisible characters removed, NFKC, case folded."""
    text = unicodedata.normalize("NFKC", name.translate(_DROP)).casefold()
    return unicodedata.normalize("NFKC", text).translate(_DROP)


def collision(first: str, second: str) -> str:
    """Why ``second`` counts as the same name as ``first`` (their keys agree); '' if equal."""
    if first == second:
        return ""
    if first.casefold() == second.casefold():
        return "names are matched ignoring case"
    return (
        "names are matched ignoring case, Unicode compatibility forms (NFKC) and invisible "
        "characters such as zero-width spaces and soft hyphens"
    )
