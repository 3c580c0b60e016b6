"""The one-line diagram's geometry: every bus, element and label drawn, nothing overlapping,
the figures printed those of the study, text kept as text (#14).

Expectations are common practice for a one-line (no source), on the bundled invented samples
and on random invented networks (tests/networks.py)."""

from __future__ import annotations

import itertools

import numpy as np
import pytest
from builders import transformer
from click.testing import CliRunner
from defusedxml import ElementTree
from networks import random_sheets

from faultcalc import read_system, run_study, sample_path, write_diagram
from faultcalc.cli import main
from faultcalc.diagram import draw, draw_pages
from faultcalc.diagram.layout import OVER

NAMES = {
    "buses": "bus",
    "sources": "source",
    "transformers": "transformer",
    "cables": "cable",
    "impedances": "element",
    "machines": "machine",
    "grounding_transformers": "grounding_transformer",
    "three_winding_transformers": "transformer",
    "inverters": "inverter",
}


def _boxes(items) -> np.ndarray:
    return np.array([i.box() for i in items], float).reshape(-1, 4)


def _overlapping(a: np.ndarray, b: np.ndarray, same: bool) -> list[tuple[int, int]]:
    """Index pairs of boxes of ``a`` and ``b`` whose interiors meet."""
    hit = (
        (a[:, None, 0] < b[None, :, 2])
        & (b[None, :, 0] < a[:, None, 2])
        & (a[:, None, 1] < b[None, :, 3])
        & (b[None, :, 1] < a[:, None, 3])
    )
    if same:
        hit &= np.triu(np.ones(hit.shape, bool), 1)
    return list(zip(*np.nonzero(hit), strict=True))


def assert_no_overlap(drawing) -> None:
    texts, symbols = _boxes(drawing.texts), _boxes(drawing.symbols)
    lines = _boxes(drawing.lines)
    found = _overlapping(texts, texts, True)
    assert not found, [(drawing.texts[i].text, drawing.texts[j].text) for i, j in found[:5]]
    found = _overlapping(symbols, symbols, True)
    assert not found, [(drawing.symbols[i].owner, drawing.symbols[j].owner) for i, j in found]
    found = _overlapping(texts, symbols, False)
    assert not found, [(drawing.texts[i].text, drawing.symbols[j].owner) for i, j in found]
    found = _overlapping(texts, lines, False)
    assert not found, [(drawing.texts[i].text, drawing.lines[j].owner) for i, j in found[:5]]
    everything = np.vstack([texts, symbols, lines])
    assert everything[:, :2].min() >= 0
    assert everything[:, 2].max() <= drawing.width and everything[:, 3].max() <= drawing.height


def assert_everything_drawn(system, drawing) -> None:
    texts = {t.text for t in drawing.texts}
    for sheet, column in NAMES.items():
        for name in getattr(system, sheet).column(column):
            assert name in texts, f"{sheet} {name} is not on the diagram"
    drawn = {s.owner for s in drawing.symbols}
    sheets = ("sources", "transformers", "cables", "impedances", "machines")
    for sheet in (*sheets, "three_winding_transformers"):
        for name in getattr(system, sheet).column(NAMES[sheet]):
            assert name in drawn, f"{sheet} {name} has no symbol"


@pytest.mark.parametrize("sample", ["plant_480v", "double_ended_480v"])
def test_the_samples_are_drawn_whole_without_overlap(sample):
    system = read_system(sample_path(sample))
    result = run_study(system)
    drawing = draw(system, result)
    assert_everything_drawn(system, drawing)
    assert_no_overlap(drawing)
    # Each bus's printed figures are the study's largest over the base and the cases, as
    # printed (two decimals).
    worst = result.buses.set_index("bus")[["i3ph_ka", "islg_ka"]]
    if result.envelope is not None:
        envelope = result.envelope.set_index("bus")[["i3ph_ka", "islg_ka"]]
        worst = np.fmax(worst, envelope)
    for bus, row in worst.iterrows():
        for line in (f"3ph {row.i3ph_ka:.2f} kA", f"SLG {row.islg_ka:.2f} kA"):
            assert line in drawing.text_of(bus), (bus, drawing.text_of(bus))


def test_a_tie_between_buses_side_by_side_runs_straight_across():
    system = read_system(sample_path("double_ended_480v"))
    drawing = draw(system, run_study(system))
    bar = {ln.owner: ln.y1 for ln in drawing.lines if ln.width > 3}
    symbol = {s.owner: s for s in drawing.symbols}
    # TIE-1 joins SUB-A and SUB-B, LOOP-2 joins RMU-A and RMU-B: each drawn at its bars' height
    assert symbol["TIE-1"].y == bar["SUB-A"] == bar["SUB-B"]
    assert symbol["LOOP-2"].y == bar["RMU-A"] == bar["RMU-B"]
    assert symbol["TIE-1"].turned and not symbol["TX-A"].turned


@pytest.mark.parametrize(
    "case",
    [
        {
            "seed": 1,
            "n_mv": 10,
            "n_lv": 40,
            "machines": 6,
            "grounding": 3,
            "three_winding": 3,
            "inverters": 4,
        },
        {"seed": 2, "n_mv": 12, "n_lv": 30, "loops": 3, "ties": 2, "machines": 4, "sources": 2},
        {"seed": 3, "n_mv": 30, "n_lv": 120, "loops": 2, "machines": 10},
    ],
)
def test_random_networks_are_drawn_whole_without_overlap(make_input, case):
    system = read_system(make_input(random_sheets(**case)))
    drawing = draw(system, run_study(system))
    assert_everything_drawn(system, drawing)
    assert_no_overlap(drawing)


def test_a_device_over_its_rating_is_marked(make_input):
    system = read_system(sample_path("double_ended_480v"))
    result = run_study(system)
    over = set(result.over_rating().bus)
    assert over  # the invented sample's 65 kA breakers see about 77 kA
    drawing = draw(system, result)
    for bus in over:
        assert any("EXCEEDS RATING" in t for t in drawing.text_of(bus))
        assert [ln.colour for ln in drawing.lines if ln.owner == bus and ln.width > 3] == [OVER]


def test_text_stays_text_in_svg_and_pdf(tmp_path):
    system = read_system(sample_path("plant_480v"))
    result = run_study(system)
    svg = tmp_path / "one-line.svg"
    write_diagram(system, result, svg)
    root = ElementTree.parse(svg).getroot()
    words = {"".join(e.itertext()) for e in root.iter() if e.tag.endswith("text")}
    assert set(system.buses.column("bus")) <= words
    pdf = tmp_path / "one-line.pdf"
    write_diagram(system, result, pdf)
    data = pdf.read_bytes()
    assert data.startswith(b"%PDF") and b"/FontFile2" in data  # TrueType embedded, not paths


def test_the_command_writes_a_diagram_and_refuses_a_wrong_suffix(tmp_path):
    out = tmp_path / "plant.png"
    done = CliRunner().invoke(main, ["diagram", str(sample_path("plant_480v")), "-o", str(out)])
    assert done.exit_code == 0, done.output
    assert out.read_bytes().startswith(b"\x89PNG")
    bad = tmp_path / "plant.docx"
    done = CliRunner().invoke(main, ["diagram", str(sample_path("plant_480v")), "-o", str(bad)])
    assert done.exit_code == 2 and ".svg, .pdf or .png" in done.output
    assert not bad.exists() and sorted(p.name for p in tmp_path.iterdir()) == ["plant.png"]


def test_overlap_check_itself_finds_an_overlap():
    # The check must be able to fail: two texts placed on one another are found.
    from faultcalc.diagram.layout import Drawing
    from faultcalc.diagram.shapes import Text

    drawing = Drawing(100, 100, texts=[Text(10, 10, "SWBD-1"), Text(20, 12, "MCC-1")])
    with pytest.raises(AssertionError):
        assert_no_overlap(drawing)
    assert list(itertools.chain(_overlapping(_boxes(drawing.texts), _boxes(drawing.texts), True)))


def test_hostile_names_are_drawn_as_plain_text(make_input, tmp_path):
    # A $ would start matplotlib's mathematics and an unclosed \frac would fail; markup must
    # stay text in the SVG (common practice, no source).
    odd = ["$\\frac{", '=HYPERLINK("x")', "<svg onload=alert(1)>&amp;"]
    sheets = {
        "buses": [
            {"bus": odd[0], "kv": 12.47},
            {"bus": odd[1], "kv": 0.48},
            {"bus": odd[2], "kv": 0.48},
        ],
        "sources": [{"source": "$U$", "bus": odd[0], "sc_mva": 300, "xr": 10, "slg_ka": 12}],
        "transformers": [transformer(transformer="T$1", hv_bus=odd[0], lv_bus=odd[1])],
        "impedances": [
            {
                "element": "Z<b>",
                "from_bus": odd[1],
                "to_bus": odd[2],
                "r_ohm": 0.001,
                "x_ohm": 0.002,
            }
        ],
    }
    system = read_system(make_input(sheets))
    result = run_study(system)
    for suffix in ("svg", "pdf", "png"):
        write_diagram(system, result, tmp_path / f"odd.{suffix}")
    root = ElementTree.parse(tmp_path / "odd.svg").getroot()
    words = {"".join(e.itertext()) for e in root.iter() if e.tag.endswith("text")}
    assert set(odd) | {"$U$", "T$1", "Z<b>"} <= words
    assert not [e for e in root.iter() if e.tag.endswith("svg")][1:]  # no nested svg element


def test_text_boxes_are_never_narrower_than_the_font_lays_the_text_out():
    # The boxes the overlap checks use must hold the text as the renderer lays it out
    # (matplotlib's FT2Font layout, hinted, with kerning): compared on every text of both
    # samples' diagrams, in regular and bold.
    from faultcalc.diagram.shapes import laid_out_width, text_width

    strings = set()
    for sample in ("plant_480v", "double_ended_480v"):
        system = read_system(sample_path(sample))
        strings |= {t.text for t in draw(system, run_study(system)).texts}
    strings |= {"AVAVAV Wo", "WWWWWWWW", "iiiiiiii", '=HYPERLINK("x")', "Ty.Te"}
    for text in sorted(strings):
        for size in (8.0, 9.0):
            for bold in (False, True):
                assert text_width(text, size, bold) >= laid_out_width(text, size, bold), text


def test_the_diagram_carries_every_caution_and_the_input_it_was_drawn_from():
    # SAFETY.md: every output carries the cautions; a diagram may be handed on alone.
    from faultcalc.cautions import CAUTIONS

    system = read_system(sample_path("plant_480v"))
    result = run_study(system)
    footer = " ".join(draw(system, result).text_of("footer"))
    for caution in CAUTIONS:
        assert caution in footer
    assert result.basis.input_sha256 in footer and system.settings.title in footer


def _bus(n, kv=0.48):
    return {"bus": n, "kv": kv}


def _source(n, b):
    return {"source": n, "bus": b, "sc_mva": 500, "xr": 10}


def _motor(n, b):
    return {
        "machine": n,
        "bus": b,
        "kind": "induction_motor",
        "hp": 10,
        "kv": 0.46,
        "xd_pct": 16.7,
        "xr": 8,
    }


@pytest.mark.parametrize(
    "sheets",
    [
        # long bold names side by side (three motors, a straight tie of 60 letters)
        {
            "buses": [_bus("MV", 13.8), _bus("MCC")],
            "sources": [_source("U", "MV")],
            "transformers": [transformer(transformer="T1", hv_bus="MV", lv_bus="MCC", hv_kv=13.8)],
            "machines": [
                _motor(f"CHILLED WATER PUMP P-10{i}A NORTH PUMPHOUSE MCC-1 BUCKET 3B", "MCC")
                for i in range(3)
            ],
        },
        {
            "buses": [_bus("MV", 13.8), _bus("a"), _bus("b")],
            "sources": [_source("U", "MV")],
            "transformers": [
                transformer(transformer="X1", hv_bus="MV", lv_bus="a", hv_kv=13.8),
                transformer(transformer="X2", hv_bus="MV", lv_bus="b", hv_kv=13.8),
            ],
            "impedances": [
                {
                    "element": "T" * 60,
                    "from_bus": "a",
                    "to_bus": "b",
                    "r_ohm": 0.001,
                    "x_ohm": 0.001,
                }
            ],
        },
        # three sources on one bus: no drop through the bus's text
        {
            "buses": [_bus("MV", 13.8)],
            "sources": [_source("A", "MV"), _source("B", "MV"), _source("C", "MV")],
        },
        # names the font has no glyph for (drawn as boxes, measured as one em each)
        {
            "buses": [_bus("変電所MV", 13.8), _bus("配電盤")],
            "sources": [_source("🔌", "変電所MV")],
            "transformers": [
                transformer(transformer="変圧器", hv_bus="変電所MV", lv_bus="配電盤", hv_kv=13.8)
            ],
        },
    ],
    ids=["long names", "long straight tie", "three sources", "glyphs not in the font"],
)
def test_a_reviewers_hostile_one_lines_are_drawn_without_overlap(make_input, sheets):
    # Found by an independent hostile pass over the diagram (common practice, no source).
    system = read_system(make_input(sheets))
    drawing = draw(system, run_study(system))
    assert_everything_drawn(system, drawing)
    assert_no_overlap(drawing)
    lacking = any(ord(c) > 0x2FFF for n in system.buses.column("bus") for c in n)
    assert lacking == any("font" in note for note in drawing.notes)


def test_a_feeder_deeper_than_the_recursion_limit_is_drawn(make_input):
    # 1,200 buses in series (Python's default recursion limit is 1,000): the layout walks
    # the tree with loops (common practice, no source).
    n = 1200
    sheets = {
        "buses": [_bus("MV", 13.8)] + [_bus(f"B{i}", 13.8) for i in range(n)],
        "sources": [_source("U", "MV")],
        "impedances": [
            {
                "element": f"Z{i}",
                "from_bus": "MV" if i == 0 else f"B{i - 1}",
                "to_bus": f"B{i}",
                "r_ohm": 0.001,
                "x_ohm": 0.002,
            }
            for i in range(n)
        ],
    }
    system = read_system(make_input(sheets))
    drawing = draw(system, run_study(system))
    assert_everything_drawn(system, drawing)
    bars = sorted(ln.y1 for ln in drawing.lines if ln.width > 3)
    assert len(bars) == n + 1 and all(b > a for a, b in zip(bars, bars[1:], strict=False))


# --- pages, references, the reduced diagram, open ties (#14) ---------------------------------

SHEET_W_PT, SHEET_H_PT = 44 * 72, 33 * 72  # ANSI E and ISO A0 both hold it (see pages.py)


def _every_page(pages):
    for page in pages:
        assert_no_overlap(page)
        assert page.width <= SHEET_W_PT and page.height <= SHEET_H_PT, (page.width, page.height)


def _union(pages):
    """The pages as one drawing for the 'everything drawn' check (their geometry apart)."""
    from faultcalc.diagram.layout import Drawing

    whole = Drawing(0, 0)
    for page in pages:
        whole.texts += page.texts
        whole.symbols += page.symbols
    return whole


@pytest.mark.parametrize("seed", [3, 5])
def test_a_150_bus_random_network_fits_one_sheet(make_input, seed):
    # The issue: up to about 150 buses on one large page (44 x 33 in, see pages.py).
    system = read_system(
        make_input(random_sheets(seed, n_mv=30, n_lv=120, loops=2, ties=2, machines=10))
    )
    assert len(system.buses) == 150
    pages = draw_pages(system, run_study(system))
    assert len(pages) == 1
    _every_page(pages)
    assert_everything_drawn(system, pages[0])
    assert sorted(pages[0].buses) == sorted(system.buses.column("bus"))


def test_a_larger_network_is_split_with_references_at_both_ends(make_input):
    system = read_system(
        make_input(random_sheets(11, n_mv=80, n_lv=320, loops=4, ties=4, machines=20))
    )
    pages = draw_pages(system, run_study(system))
    n = len(pages)
    assert n > 1 and [p.page for p in pages] == list(range(1, n + 1))
    assert all(p.pages == n for p in pages)
    _every_page(pages)
    assert_everything_drawn(system, _union(pages))
    drawn = [b for p in pages for b in p.buses]
    assert sorted(drawn) == sorted(system.buses.column("bus"))  # each bus on exactly one page
    page_of = {b: p.page for p in pages for b in p.buses}
    found = {(p.page, r.direction, r.page, r.bus, r.here) for p in pages for r in p.references}
    assert any(d == "to" and k != j for j, d, k, _, _ in found)  # some cut crosses pages
    for j, direction, k, bus, here in found:
        assert 1 <= k <= n and page_of[bus] == k and page_of[here] == j
        words = " ".join(pages[j - 1].texts[i].text for i in range(len(pages[j - 1].texts)))
        assert (f"page {k}" if k != j else "this page") in words and bus in words
        mirror = {"to": "from", "from": "to", "tie": "tie"}[direction]
        assert (k, mirror, j, here, bus) in found, (j, direction, k, bus, here)  # other end


def test_a_network_above_the_threshold_keeps_its_levels_above_1_kv_and_service_equipment(
    make_input, monkeypatch
):
    # The threshold is lowered for the test: the rule, not its value, is checked here.
    import faultcalc.diagram.pages as pages_module

    sheets = random_sheets(7, n_mv=15, n_lv=60, loops=1, ties=1, machines=6)
    service = {"L3", "L17", "L40"}
    for row in sheets["buses"]:
        row["service"] = "yes" if row["bus"] in service else "no"
    system = read_system(make_input(sheets))
    result = run_study(system)
    monkeypatch.setattr(pages_module, "REDUCED_ABOVE_BUSES", len(system.buses) - 1)
    pages = draw_pages(system, result)
    drawn = {b for p in pages for b in p.buses}
    expected = {b.bus for b in system.buses if b.kv > 1.0 or b.service == "yes"}
    assert drawn == expected  # the sources' buses are at 13.8 kV here
    footer = " ".join(t for p in pages for t in p.text_of("footer"))
    assert "reduced diagram" in footer and "above 1 kV" in footer
    _every_page(pages)
    monkeypatch.setattr(pages_module, "REDUCED_ABOVE_BUSES", len(system.buses))
    assert {b for p in draw_pages(system, result) for b in p.buses} == {
        b.bus for b in system.buses
    }  # at the threshold itself: every bus


def _tie_sheets(in_service: str):
    return {
        "buses": [_bus("MV", 13.8), _bus("A"), _bus("B")],
        "sources": [_source("U", "MV")],
        "transformers": [
            transformer(transformer="TA", hv_bus="MV", lv_bus="A", hv_kv=13.8),
            transformer(transformer="TB", hv_bus="MV", lv_bus="B", hv_kv=13.8),
        ],
        "cables": [
            {
                "cable": "TIE-AB",
                "from_bus": "A",
                "to_bus": "B",
                "length_ft": 50,
                "r_ohm_per_kft": 0.05,
                "x_ohm_per_kft": 0.04,
                "in_service": in_service,
            }
        ],
    }


def test_an_open_tie_is_drawn_open_and_left_out_of_the_study(make_input):
    opened = read_system(make_input(_tie_sheets("no")))
    closed = read_system(make_input(_tie_sheets("yes")))
    assert [b.name for b in opened.open_branches] == ["TIE-AB"] and not closed.open_branches
    assert len(opened.cables) == 0  # the study sees no tie
    study = run_study(opened).buses.set_index("bus")
    alone = read_system(make_input({k: v for k, v in _tie_sheets("no").items() if k != "cables"}))
    assert np.allclose(study.i3ph_ka, run_study(alone).buses.set_index("bus").i3ph_ka)
    assert not np.allclose(study.i3ph_ka, run_study(closed).buses.set_index("bus").i3ph_ka)
    drawing = draw(opened, run_study(opened))
    assert_no_overlap(drawing)
    symbols = [s for s in drawing.symbols if s.owner == "TIE-AB"]
    assert [s.kind for s in symbols] == ["open"]
    lines = [ln for ln in drawing.lines if ln.owner == "TIE-AB"]
    assert lines and all(ln.dashed for ln in lines)
    assert any("open" in t for t in drawing.text_of("TIE-AB"))
    shut = draw(closed, run_study(closed))
    assert [s.kind for s in shut.symbols if s.owner == "TIE-AB"] == ["cable"]


@pytest.mark.slow  # writes some ten SVG pages: about 10 s
def test_a_diagram_of_several_pages_is_one_pdf_or_numbered_svgs(make_input, tmp_path):
    import re

    system = read_system(
        make_input(random_sheets(11, n_mv=80, n_lv=320, loops=4, ties=4, machines=20))
    )
    result = run_study(system)
    pdf = tmp_path / "big.pdf"
    n = len(write_diagram(system, result, pdf))
    assert n > 1 and len(re.findall(rb"/Type\s*/Page\b(?!s)", pdf.read_bytes())) == n
    svg = tmp_path / "big.svg"
    assert len(write_diagram(system, result, svg)) == n
    names = {svg.name} | {f"big-p{k}.svg" for k in range(2, n + 1)}
    assert names <= {p.name for p in tmp_path.iterdir()}
    (tmp_path / f"big-p{n + 1}.svg").write_text("left by a longer diagram")
    with pytest.raises(Exception, match="exists"):
        write_diagram(system, result, svg)  # refused without overwrite, nothing changed
    write_diagram(system, result, svg, overwrite=True)
    assert not (tmp_path / f"big-p{n + 1}.svg").exists()  # the stale page is removed
