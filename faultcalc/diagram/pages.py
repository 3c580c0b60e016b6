"""The diagram as pages: one drawing when the system fits one sheet; else subtrees, drawn as
panels, shelved on as few sheets as hold them, with a reference at both ends of every cut;
above REDUCED_ABOVE_BUSES buses only the levels above 1 kV and the service equipment
(reduce.py).

The sheet: every page fits 44 x 33 in (3,168 x 2,376 pt), which both ANSI E (44 x 34 in) and
ISO A0 (46.8 x 33.1 in) hold, landscape, so one file plots on either. A page is as large as
what it holds (a small system stays a small page), and holds at most PAGE_BUSES buses.

The split (common practice, no source): walking the tree from the leaves up, a bus whose
subtree (every tie a stub) is wider or taller than a panel, or holds more than PAGE_BUSES
buses, sends its largest child's subtree to a panel of its own, until what is left fits.
Panels of several sizes (SPLIT_FRACTIONS of the sheet) are tried; each panel is laid out in a
few shapes and the panels are shelved (``_shelve``); the split giving the fewest pages, then
the fewest panels, is kept. A panel fed from another shows, above its top bus, "from page j
(or this page), bus P" and the branch that feeds it; the bus P shows "to page k, bus C, via
the branch". A tie between two panels is a stub at each end naming the other bus and its page.

Why REDUCED_ABOVE_BUSES = 3,000 (measured on random networks of tests/networks.py, a fifth
of the buses at 13.8 kV, two shared cores): 2,000 buses drew as 14 pages in 7 s and wrote
as PDF in 20 s; 10,000 buses in full as 67 pages, 54 s to draw and 105 s to write; reduced,
as 20 pages in 8 s (a PDF of 18 pages took 44 s). A full set grows by a sheet per 140-odd
buses, so at 3,000 (some 21 sheets, half a minute) it is already more than anyone reads as
one set; above it the levels above 1 kV (the sources, the switching, the large equipment)
and the service equipment keep a diagram that says where power comes from, and the results
workbook holds every bus's figures.
"""

from __future__ import annotations

import math

from .footer import add_footer, footer_height, footer_lines
from .layout import Drawing, View, plan, render
from .parts import MARGIN, bus_lines, result_rows, statuses
from .reduce import KEEP_ABOVE_KV, reduced
from .shapes import FONT, lacks
from .topology import tree_of

SHEET_WIDTH_PT = 44 * 72.0  # ANSI E is 44 x 34 in, ISO A0 46.8 x 33.1 in: both hold 44 x 33
SHEET_HEIGHT_PT = 33 * 72.0
SHEET_NAME = "44 x 33 in (ANSI E or ISO A0, landscape)"
PAGE_BUSES = 150  # the buses a page holds at most (the "about 150 on one page")
REDUCED_ABOVE_BUSES = 3_000  # see the module docstring of pages.py and the notes
SHEET_ASPECT = SHEET_WIDTH_PT / SHEET_HEIGHT_PT
ASPECTS = tuple(
    SHEET_ASPECT * k for k in (0.25, 0.35, 0.5, 0.7, 1.0, 1.4, 2.0, 3.0)
)  # the shapes tried per page


class _Texts:
    """Each bus's printed lines and bar colour, made once for every page."""

    def __init__(self, system, result, buses):
        rows, status = result_rows(result), statuses(result)
        known = {b.bus: b for b in system.buses}
        self.lines = {b: bus_lines(known[b], rows.get(b), status.get(b, "")) for b in buses}
        self.colours = {b: s[1] for b, s in status.items()}


def _fit(view: View, texts: _Texts, footer) -> tuple:
    """The placement of ``view`` that needs the least scaling to fit the sheet (with its
    title block of ``footer(width)`` lines), and that scale (at most 1: it fits)."""
    best = None
    for aspect in ASPECTS:
        p = plan(view, texts.lines, aspect)
        height = p.total_height + footer_height(footer(p.total_width))
        scale = max(p.total_width / SHEET_WIDTH_PT, height / SHEET_HEIGHT_PT)
        if best is None or scale < best[1] - 1e-9:
            best = (p, scale)
    return best


def _finish(p, texts, footer) -> Drawing:
    drawing = render(p, texts.lines, texts.colours)
    add_footer(drawing, footer(drawing.width))
    return drawing


def _notes(tree, texts: _Texts) -> list[str]:
    notes = []
    if tree.unreached:
        notes.append(
            "not fed from any source or generator (drawn apart): " + ", ".join(tree.unreached)
        )
    if any(lacks(t) for lines in texts.lines.values() for t, *_ in lines):
        notes.append(
            f"some names hold characters the diagram's font ({FONT}) does not have; they print "
            "as boxes here (the results workbook holds them as typed)"
        )
    return notes


def draw(system, result=None) -> Drawing:
    """The whole diagram of ``system`` on one drawing (however large), annotated with
    ``result`` (a StudyResult) when given; :func:`draw_pages` splits a large one."""
    tree = tree_of(system)
    texts = _Texts(system, result, tree.level)
    notes = _notes(tree, texts)

    def footer(width):
        return footer_lines(width, system, result, notes)

    p, _ = _fit(View(tree, list(tree.roots)), texts, footer)
    drawing = _finish(p, texts, footer)
    drawing.notes = notes
    return drawing


def draw_pages(system, result=None) -> list[Drawing]:
    """The diagram of ``system`` as pages of at most 44 x 33 in and PAGE_BUSES buses each,
    annotated with ``result`` (a StudyResult) when given.

    Every bus is on exactly one page; a subtree continued elsewhere (another panel of the page
    or another page) is referred to at both ends. Above REDUCED_ABOVE_BUSES buses only the
    buses above 1 kV and the service equipment are drawn, and every page says so.

    Examples
    --------
    >>> from faultcalc import read_system, sample_path
    >>> pages = draw_pages(read_system(sample_path("plant_480v")))
    >>> len(pages), pages[0].width <= SHEET_WIDTH_PT
    (1, True)
    """
    tree = tree_of(system)
    hidden: dict[str, tuple[str, ...]] = {}
    notes = []
    if len(system.buses) > REDUCED_ABOVE_BUSES:
        tree, hidden, kept = reduced(tree, system)
        notes.append(
            f"reduced diagram: a system of more than {REDUCED_ABOVE_BUSES:,} buses is drawn "
            f"with its buses above {KEEP_ABOVE_KV:g} kV and its service equipment only "
            f"({kept:,} of {len(system.buses):,} buses); the results workbook lists every bus"
        )
    texts = _Texts(system, result, tree.level)
    notes += _notes(tree, texts)

    def footer(width, said=()):
        return footer_lines(width, system, result, notes, said)

    whole, scale = _fit(View(tree, list(tree.roots), hidden=hidden), texts, footer)
    if scale <= 1.0 and len(tree.level) <= PAGE_BUSES:
        drawing = _finish(whole, texts, footer)
        drawing.notes = list(notes)
        return [drawing]
    longest = "Page 999 of 999: " + ", ".join(["bus " + "W" * 60] * PAGE_LINE_ROOTS) + " x" * 40
    layout = _paginate(tree, texts, hidden, footer(SHEET_WIDTH_PT, [longest]))
    drawings = []
    for k, panels in enumerate(layout.pages, start=1):
        drawing = _page(layout, k, panels, texts)
        drawing.width = SHEET_WIDTH_PT  # the pages of a set all as wide as the sheet
        said = _page_lines(layout, k, panels, drawing)
        add_footer(drawing, footer(drawing.width, said))
        drawing.pages = len(layout.pages)
        drawing.notes = list(notes)
        drawings.append(drawing)
    return drawings


PANEL_GAP = 24.0  # between two panels of a page
PAGE_LINE_ROOTS = 6  # the panels a page's title block names (the rest counted)
SPLIT_FRACTIONS = (
    1.0,
    0.7,
    0.5,
    0.35,
    0.25,
    0.18,
    0.12,
)  # the panel sizes tried, as parts of the sheet


class _Layout:
    """The panels (one root each) and, per page, the panels on it with their offsets."""

    def __init__(self, tree, hidden):
        self.tree, self.hidden = tree, hidden
        self.page_of: dict[str, int] = {}
        self.panel_of: dict[str, int] = {}
        self.roots: list[str] = []  # each panel's root
        self.pages: list[list[tuple]] = []  # per page: (panel, its aspect, x, y)


def _paginate(tree, texts: _Texts, hidden, footer) -> _Layout:
    """Split the tree into panels and shelve them on as few pages as hold them: each split
    (SPLIT_FRACTIONS of the sheet per panel) tried, the fewest pages, then panels, kept."""
    room_w = SHEET_WIDTH_PT - 2 * MARGIN
    room_h = SHEET_HEIGHT_PT - footer_height(footer) - 2 * MARGIN
    best = None
    lower = max(1, math.ceil(len(tree.level) / PAGE_BUSES))
    for fraction in SPLIT_FRACTIONS:
        roots = _split(tree, texts, hidden, room_w * fraction, room_h * fraction)
        layout = _Layout(tree, hidden)
        layout.roots = roots
        starts = set(roots)
        members = [_under(tree, [r], starts) for r in roots]
        for k, buses in enumerate(members):
            layout.panel_of.update(dict.fromkeys(buses, k))
        options = []
        for k in range(len(roots)):  # measured with every page number three digits
            view = _panel_view(layout, k, _AnyPage())
            found = {}
            for aspect in ASPECTS:
                p = plan(view, texts.lines, aspect)
                found.setdefault((round(p.total_width), round(p.total_height)), aspect)
            options.append([(w, h, a, len(members[k])) for (w, h), a in found.items()])
        first = {k for k, r in enumerate(roots) if tree.parent.get(r) is None}
        layout.pages = _shelve(options, room_w, room_h, first)
        for page, panels in enumerate(layout.pages, start=1):
            for k, *_ in panels:
                layout.page_of.update(dict.fromkeys(members[k], page))
        key = (len(layout.pages), len(roots))
        if best is None or key < best[0]:
            best = (key, layout)
        # no split can take fewer pages than the buses need at PAGE_BUSES a page, and a
        # smaller fraction only splits into more panels: stop at the first that reaches it
        # (the same sheets; 2,000 buses: 5.8 s to 4.2 s)
        if len(roots) == 1 or key[0] <= lower:
            break
    return best[1]


def _panel_view(layout: _Layout, k: int, page_of) -> View:
    page = page_of.get(layout.roots[k], 0) if not isinstance(page_of, _AnyPage) else 0
    return View(layout.tree, [layout.roots[k]], page_of, page, layout.hidden, layout.panel_of, k)


def _shelve(options, room_w: float, room_h: float, first=frozenset()):
    """Pages of panels on shelves. Each panel takes its smallest shape (of its ``options``:
    width, height, aspect, buses) that fits the sheet; the panels, depth first (those of the
    sources, ``first``, before the rest), fill a page for as long as the page's panels still
    go on it, tallest first, each on the first shelf with room, else on a new shelf (first fit
    by decreasing height, common practice for strip packing, no source), with at most
    PAGE_BUSES buses; then the next page. Returns per page its panels as (panel, aspect, x,
    y)."""
    chosen = {}
    for k, shapes in enumerate(options):
        fitting = [o for o in shapes if o[0] <= room_w and o[1] <= room_h] or shapes
        chosen[k] = min(fitting, key=lambda o: (o[0] * o[1], o[1]))
    order = sorted(chosen, key=lambda k: (k not in first, k))
    pages, current, placed = [], [], None
    for k in order:
        trial = [*current, k]
        fits = sum(chosen[j][3] for j in trial) <= PAGE_BUSES
        placing = _shelves(trial, chosen, room_w, room_h, first) if fits else None
        if current and placing is None:
            pages.append(placed)
            alone = _shelves([k], chosen, room_w, room_h, first)
            current, placed = [k], alone or [_alone(k, chosen)]
        else:
            current, placed = trial, placing or [_alone(k, chosen)]
    if current:
        pages.append(placed)
    return pages


def _alone(k, chosen):
    return (k, chosen[k][2], 0.0, 0.0)


def _shelves(panels, chosen, room_w: float, room_h: float, first):
    """``panels`` on one page, those of the sources (``first``) then the tallest first, each
    on the first shelf with room; None if they do not all go on it."""
    shelves: list[list[float]] = []  # y, height, width used
    out = []
    for k in sorted(panels, key=lambda j: (j not in first, -chosen[j][1], j)):
        w, h, aspect, _ = chosen[k]
        for shelf in shelves:
            if h <= shelf[1] and shelf[2] + PANEL_GAP + w <= room_w:
                out.append((k, aspect, shelf[2] + PANEL_GAP, shelf[0]))
                shelf[2] += PANEL_GAP + w
                break
        else:
            y = shelves[-1][0] + shelves[-1][1] + PANEL_GAP if shelves else 0.0
            if y + h > room_h or w > room_w:
                return None
            shelves.append([y, h, w])
            out.append((k, aspect, 0.0, y))
    return out


def _page(layout: _Layout, page: int, panels, texts: _Texts) -> Drawing:
    """A page: its panels where _shelve put them."""
    drawing = Drawing(width=0.0, height=0.0, page=page)
    for k, aspect, x, y in panels:
        p = plan(_panel_view(layout, k, layout.page_of), texts.lines, aspect)
        part = render(p, texts.lines, texts.colours)
        _shift_into(drawing, part, x, y)
        drawing.width = max(drawing.width, x + part.width)
        drawing.height = max(drawing.height, y + part.height)
    return drawing


def _shift_into(drawing: Drawing, part: Drawing, dx: float, dy: float) -> None:
    from dataclasses import replace

    for line in part.lines:
        drawing.lines.append(
            replace(line, x1=line.x1 + dx, y1=line.y1 + dy, x2=line.x2 + dx, y2=line.y2 + dy)
        )
    drawing.symbols += [replace(s, x=s.x + dx, y=s.y + dy) for s in part.symbols]
    drawing.texts += [replace(t, x=t.x + dx, y=t.y + dy) for t in part.texts]
    drawing.buses += part.buses
    drawing.references += part.references


def _under(tree, roots, starts) -> list[str]:
    """The buses of a panel: under its roots, down to the roots of other panels (``starts``)."""
    out, stack = [], list(roots)
    while stack:
        bus = stack.pop()
        out.append(bus)
        stack.extend(c for c in tree.children[bus] if c not in starts)
    return out


def _page_lines(layout: _Layout, page: int, panels, drawing) -> list[str]:
    """What the page holds and where it goes on, for its title block."""
    fed = []
    for k, *_ in sorted(panels, key=lambda item: item[0]):
        root = layout.roots[k]
        branch = layout.tree.parent.get(root)
        if branch is None:
            fed.append(f"bus {root}")
        elif layout.page_of[branch.one] != page:
            fed.append(f"bus {root} (fed from page {layout.page_of[branch.one]})")
        else:
            fed.append(f"bus {root}")
    onward = sorted({r.page for r in drawing.references if r.direction == "to" and r.page != page})
    shown = ", ".join(fed[:PAGE_LINE_ROOTS])
    if len(fed) > PAGE_LINE_ROOTS:
        shown += f" and {len(fed) - PAGE_LINE_ROOTS:,} more"
    text = f"Page {page} of {len(layout.pages)}: {shown}, each with the buses under it"
    if onward:
        text += "; continued on page(s) " + ", ".join(str(k) for k in onward)
    return [text]


class _Cut(View):
    """The view the split measures with: every bus not cut away is here."""

    def __init__(self, tree, hidden):
        super().__init__(tree, list(tree.roots), _AnyPage(), 0, hidden)
        self.cut: set[str] = set()

    def here(self, bus: str) -> bool:
        return bus not in self.cut

    def away(self, bus: str) -> list[str]:
        return [c for c in self.tree.children[bus] if c in self.cut]


class _AnyPage(dict):
    def __missing__(self, key):
        return 999  # measured as a three-digit page number

    def __bool__(self):
        return True


def _split(tree, texts: _Texts, hidden, room_w: float, room_h: float) -> list[str]:
    """The roots of the panels (see the module docstring)."""
    from .layout import _dfs, _hanging, choose

    view = _Cut(tree, hidden)
    order = _dfs(View(tree, list(tree.roots)))
    ends = {b for t in tree.ties for b in (t.one, t.two)}
    tied: dict[str, bool] = {}
    stubs: dict[str, list] = {}
    for t in tree.ties:
        stubs.setdefault(t.one, []).append((t, t.two))
        stubs.setdefault(t.two, []).append((t, t.one))
    width, depth, count = {}, {}, {}
    for bus in reversed(order):
        tied[bus] = bus in ends or any(tied[c] for c in tree.children[bus])
        while True:
            kids = view.kids(bus)
            hang = _hanging(view, bus, stubs.get(bus, []))
            found = choose(view, bus, tied, hang, width, depth, texts.lines, SHEET_ASPECT)
            width[bus], depth[bus] = found[2], found[3]
            count[bus] = 1 + sum(count[c] for c in kids)
            fits = count[bus] <= PAGE_BUSES and width[bus] <= room_w and depth[bus] <= room_h
            if fits or not kids:
                break
            view.cut.add(max(kids, key=lambda c: (count[c], width[c], depth[c])))
    return [b for b in order if b in view.cut or tree.parent.get(b) is None]
