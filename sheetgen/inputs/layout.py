"""Page layouts as data: which blocks, in what order, in which column, on what paper.

A layout file is YAML whose syntax is explained at the top of each shipped
file (``layouts/a4-sheet.yaml``).  It is read here into frozen dataclasses and
checked completely before any page is built, so a typo in a layout stops the
build with the file, line and key named instead of a half-drawn sheet.

Two kinds share the syntax: a sheet layout (``blocks:`` flowing over pages)
and a card layout (``card:`` gives a trimmed card size, ``front:`` and
``back:`` its blocks; ``layouts/a6-card.yaml``), whose cards are printed
several to a sheet of paper with cut marks.  A file with ``card:`` is a card
layout.

The shipped layouts live in the repository's top-level ``layouts/`` folder,
the one source.  A built package carries them as ``sheetgen/layouts`` (the
packaging maps that folder in); a checkout or an editable install reads the
repository's folder directly.
"""

from __future__ import annotations

import math
import os
import re
from dataclasses import dataclass, replace
from importlib import resources
from pathlib import Path

from yaml.nodes import MappingNode, Node, ScalarNode, SequenceNode

from sheetgen.errors import SpecError
from sheetgen.inputs.blocknames import CARD_BLOCKS, SHEET_BLOCKS
from sheetgen.reader.files import read_text
from sheetgen.reader.text import line_problem
from sheetgen.reader.yamltree import Problems, compose, excerpt, given_twice, mapping, suggest

__all__ = [
    "BLOCK_NAMES",
    "CARD_BLOCK_NAMES",
    "CARD_SIZES_MM",
    "PAGE_SIZES_PT",
    "DEFAULT_LAYOUT",
    "DEFAULT_CARD_LAYOUT",
    "Column",
    "BlockPlacement",
    "Layout",
    "CardLayout",
    "Slot",
    "shipped_layouts",
    "load_layout",
    "parse_layout",
]

#: Every block a layout may place; the renderer registers one flowable for each.
BLOCK_NAMES = SHEET_BLOCKS.names

#: Blocks every sheet must carry, whatever the layout says.
REQUIRED_BLOCKS = ("cautions",)

#: Every block a card layout may place, on its front or back.
CARD_BLOCK_NAMES = CARD_BLOCKS.names

#: Paper sizes (width, height) in points, portrait.
PAGE_SIZES_PT = {"A4": (595.2756, 841.8898), "letter": (612.0, 792.0)}

#: Trimmed card sizes (width, height) in mm, portrait: ISO 216 A6 and the 4 × 6 inch index card.
CARD_SIZES_MM = {"A6": (105.0, 148.0), "4x6in": (101.6, 152.4)}

FULL = "full"
NAME_MAX_CHARS = 60  # the title block prints it on one line
DEFAULT_LAYOUT = "a4-sheet"
DEFAULT_CARD_LAYOUT = "a6-card"
CARD_RANGE_MM = (60.0, 280.0)  # up to one card filling an A4 or letter page; the least a card needs is worked out below
CARD_GAP_RANGE_MM = (6.0, 30.0)  # the cut marks of two neighbours sit in the gap without touching
MARGIN_RANGE_MM = (5.0, 40.0)  # below 5 mm most printers clip; above 40 mm nothing fits
GUTTER_RANGE_MM = (0.0, 25.0)
#: The narrowest column: a five-column table of 6.5 pt type still sets its header words whole
#: (common practice, no source).
COLUMN_MIN_MM = 40.0

_MM_PER = {"mm": 1.0, "cm": 10.0, "in": 25.4, "pt": 25.4 / 72.0}
_LENGTH_RE = re.compile(r"^\s*(?P<num>\d+(?:\.\d*)?|\.\d+)\s*(?P<unit>mm|cm|in|pt)\s*$")
_TOP_KEYS = ("name", "page", "margins", "columns", "gutter", "blocks")
_CARD_TOP_KEYS = ("name", "page", "card", "margins", "gap", "front", "back", "balance", "larger")
_LARGER_KEYS = ("card", "margins", "gap")
_CARD_SIZE_KEYS = ("width", "height")
_SIDES = ("top", "right", "bottom", "left")
_BLOCK_KEYS = ("block", "column", "new_page")


@dataclass(frozen=True)
class Column:
    """A named column of a side-by-side row."""

    name: str
    share: float  # relative width: {left: 2, right: 1} gives left two thirds


@dataclass(frozen=True)
class BlockPlacement:
    """One block, where it goes and whether it starts a fresh page."""

    name: str  # one of BLOCK_NAMES
    column: str  # "full" or one of the layout's column names
    new_page: bool = False


@dataclass(frozen=True)
class Layout:
    """A checked layout; ``source`` is the file it came from, for messages."""

    name: str
    source: str
    page_size: str  # "A4" or "letter"
    margins_mm: tuple[float, float, float, float]  # top, right, bottom, left
    columns: tuple[Column, ...]
    gutter_mm: float
    blocks: tuple[BlockPlacement, ...]

    @property
    def page_size_pt(self) -> tuple[float, float]:
        return PAGE_SIZES_PT[self.page_size]

    def column_widths_pt(self, frame_width_pt: float) -> dict[str, float]:
        """Width of each named column inside a frame of ``frame_width_pt``."""
        gutter = self.gutter_mm * 72.0 / 25.4
        usable = frame_width_pt - gutter * (len(self.columns) - 1)
        total = sum(c.share for c in self.columns)
        return {c.name: usable * c.share / total for c in self.columns}


@dataclass(frozen=True)
class Slot:
    """Where one card sits on a sheet: its lower-left corner in points, and its place in the grid."""

    x_pt: float
    y_pt: float
    column: int  # from the left, from 0
    row: int  # from the top, from 0


@dataclass(frozen=True)
class CardLayout:
    """A checked card layout: the card's size, its two sides, and how it is set on the paper.

    The cards are set in a grid, centred, at least ``margins_mm`` from the
    paper's edge and ``gap_mm`` apart; the paper turns to landscape when that
    holds more cards.  ``back`` may be empty for a one-sided card.
    """

    name: str
    source: str
    page_size: str  # "A4" or "letter": the paper the cards are printed on
    card_mm: tuple[float, float]  # trimmed width, height
    margins_mm: float  # least distance from the paper's edge to a card
    gap_mm: float  # between neighbouring cards; the cut marks sit in it
    front: tuple[str, ...]  # CARD_BLOCK_NAMES, top to bottom
    back: tuple[str, ...]
    balance: bool = True  # the block at the fold may cross sides when that sets larger type
    larger: CardLayout | None = None  # the same blocks on a larger card, for a design too full for this one

    @property
    def card_pt(self) -> tuple[float, float]:
        return self.card_mm[0] * _PT_PER_MM, self.card_mm[1] * _PT_PER_MM

    @property
    def sheet_size_pt(self) -> tuple[float, float]:
        """The paper as the cards use it, portrait or landscape."""
        return _best_grid(self)[0]

    @property
    def grid(self) -> tuple[int, int]:
        """(columns, rows) of cards on one sheet."""
        return _best_grid(self)[1]

    @property
    def per_sheet(self) -> int:
        columns, rows = self.grid
        return columns * rows

    def slots(self) -> tuple[Slot, ...]:
        """Every card position on a sheet, in reading order (rows from the top, left to right)."""
        (page_w, page_h), (columns, rows) = _best_grid(self)
        card_w, card_h = self.card_pt
        gap = self.gap_mm * _PT_PER_MM
        x0 = (page_w - columns * card_w - (columns - 1) * gap) / 2
        top = page_h - (page_h - rows * card_h - (rows - 1) * gap) / 2
        return tuple(Slot(x_pt=x0 + c * (card_w + gap), y_pt=top - (r + 1) * card_h - r * gap, column=c, row=r)
                     for r in range(rows) for c in range(columns))


_PT_PER_MM = 72.0 / 25.4

# ------------------------------------------------- what a card must hold at 6 pt
# A card's type never sets below 6 pt (common practice for printed instructions, no source), so a card
# must at least hold, at that size, what every card prints whatever its design: its footer line, set
# whole, and on the side that carries them its header, footer and the cautions.  The card renderer
# (outputs/pdf/cards.py) sets its sides inside these figures; tests/outputs/test_cards.py measures the
# two text figures again with the renderer and the catalog's words, so they cannot drift.

#: Inner safe area on every edge of a card: survives a cut a little off the mark and a back printed askew.
CARD_PAD_MM = 4.0
#: A front's header (builder label and event, the name's band, the design title, a rule), in points.
CARD_FRONT_HEAD_PT = 8.0 + 23.0 + 16.0
#: A back's header (kit letter and design title, a rule) and either side's footer line, in points.
CARD_BACK_HEAD_PT = 18.0
CARD_FOOT_PT = 8.5
#: The footer (the low-voltage scope line) set whole at 6 pt: 212.5 pt of DejaVu Sans = 75.0 mm.
CARD_FOOTER_LINE_MM = 75.0
#: The narrowest card: its footer line at 6 pt between the pads.
CARD_MIN_WIDTH_MM = CARD_FOOTER_LINE_MM + 2 * CARD_PAD_MM
#: The longest cautions a card can carry (the fuse, a heatsink and its heat, a vehicle's two, no
#: over-voltage cut-off: six), set at the card's smallest type (6.7 pt) on the narrowest card:
#: 118.3 pt = 41.75 mm, title bar and frame included.
CARD_CAUTIONS_MM = 42.0


def card_side_min_mm(head_pt: float) -> float:
    """The least height of a card whose side with this header carries the cautions."""
    return CARD_CAUTIONS_MM + 2 * CARD_PAD_MM + (head_pt + CARD_FOOT_PT) / _PT_PER_MM


def _fit(length_pt: float, card_pt: float, margin_pt: float, gap_pt: float) -> int:
    return max(int((length_pt - 2 * margin_pt + gap_pt) // (card_pt + gap_pt)), 0)


def _best_grid(layout: CardLayout) -> tuple[tuple[float, float], tuple[int, int]]:
    """The paper's orientation and the (columns, rows) that hold the most cards; portrait on a tie."""
    w, h = PAGE_SIZES_PT[layout.page_size]
    card_w, card_h = layout.card_pt
    margin, gap = layout.margins_mm * _PT_PER_MM, layout.gap_mm * _PT_PER_MM
    best = None
    for page in ((w, h), (h, w)):
        grid = (_fit(page[0], card_w, margin, gap), _fit(page[1], card_h, margin, gap))
        if best is None or grid[0] * grid[1] > best[1][0] * best[1][1]:
            best = (page, grid)
    return best


def _shipped_folder():
    """The shipped layouts: inside an installed package, else the checkout's ``layouts/``."""
    packaged = resources.files("sheetgen") / "layouts"
    if packaged.is_dir():
        return packaged
    return Path(__file__).resolve().parents[2] / "layouts"


def shipped_layouts() -> tuple[str, ...]:
    """Names ``--layout NAME`` accepts."""
    folder = _shipped_folder()
    return tuple(sorted(p.name[:-5] for p in folder.iterdir() if p.name.endswith(".yaml")))


def load_layout(name_or_path: str | os.PathLike[str] | None = None, *,
                default: str = DEFAULT_LAYOUT) -> Layout | CardLayout:
    """A shipped layout by name, or a layout file by path (anything with a slash or a .yaml/.yml ending)."""
    choice = os.fspath(name_or_path) if name_or_path is not None else default
    looks_like_path = os.sep in choice or "/" in choice or choice.endswith((".yaml", ".yml"))
    if not looks_like_path:
        known = shipped_layouts()
        if choice not in known:
            hint = [k for k in known if k.startswith(choice.lower())]
            maybe = f" (did you mean `{hint[0]}`?)" if hint else _suggest(choice, known)
            raise SpecError(f"--layout: no shipped layout is named {excerpt(choice)}{maybe}; shipped: "
                            f"{', '.join(known)}; or give the path of a layout file")
        entry = _shipped_folder() / f"{choice}.yaml"
        return parse_layout(entry.read_text(encoding="utf-8"), source=f"layouts/{choice}.yaml")
    text = read_text(choice, what="layout", shown=f"--layout: {choice}")
    return parse_layout(text, source=choice)


# ----------------------------------------------------------------- checking
def _suggest(word: str, choices) -> str:
    hint = suggest(word, choices)
    return f" (did you mean `{hint}`?)" if hint else ""


def _scalar(node: Node, key: str, problems: Problems) -> str | None:
    if not isinstance(node, ScalarNode) or node.value == "":
        problems.add(node, key, "should be a single value")
        return None
    return node.value


def _name(node: Node, problems: Problems) -> str | None:
    """The layout's name, printed in the title block: one short line."""
    text = _scalar(node, "name", problems)
    if text is None:
        return None
    problem = line_problem(text)
    if problem is None and len(text) > NAME_MAX_CHARS:
        problem = f"is {len(text):,} characters long; keep it to {NAME_MAX_CHARS}"
    if problem:
        problems.add(node, "name", problem)
        return None
    return text


def _length_mm(node: Node, key: str, lo: float, hi: float, problems: Problems) -> float | None:
    text = _scalar(node, key, problems)
    if text is None:
        return None
    match = _LENGTH_RE.match(text)
    if match is None:
        problems.add(node, key, f"{excerpt(text)} is not a length; write it with its unit, e.g. 12 mm")
        return None
    mm = float(match["num"]) * _MM_PER[match["unit"]]
    if not lo <= mm <= hi:
        problems.add(node, key, f"{excerpt(text)} is outside {lo:g}-{hi:g} mm")
        return None
    return mm


def _flag(node: Node, key: str, problems: Problems) -> bool:
    text = _scalar(node, key, problems)
    if text in ("true", "false"):
        return text == "true"
    if text is not None:
        problems.add(node, key, f"{excerpt(text)} should be true or false")
    return False


def _paper(node: Node, problems: Problems) -> str | None:
    """``page:`` as a known paper size, or None (the problem is noted); sheets and cards print on the same papers."""
    page = _scalar(node, "page", problems)
    if page is not None and page not in PAGE_SIZES_PT:
        problems.add(node, "page", f"{excerpt(page)} is not a paper size{_suggest(page, PAGE_SIZES_PT)}; "
                                   f"known: {', '.join(PAGE_SIZES_PT)}")
        return None
    return page


def load_sheet_layout(name_or_path: str | os.PathLike[str] | None, *, option: str = "--layout") -> Layout:
    """A sheet layout, refusing a card layout with a line that says where that one goes."""
    layout = load_layout(name_or_path)
    if isinstance(layout, CardLayout):
        raise SpecError(f"{option}: {layout.name} is a card layout; give a sheet layout such as a4-sheet")
    return layout


def load_card_layout(name_or_path: str | os.PathLike[str] | None, *, option: str = "--cards") -> CardLayout:
    """A card layout, refusing a sheet layout with a line that says where that one goes."""
    layout = load_layout(name_or_path, default=DEFAULT_CARD_LAYOUT)
    if not isinstance(layout, CardLayout):
        raise SpecError(f"{option}: {layout.name} is a sheet layout; give a card layout such as a6-card")
    return layout


def parse_layout(text: str, *, source: str) -> Layout | CardLayout:
    """Check a layout given as YAML text; raise one SpecError listing every problem."""
    problems = Problems(source)
    root = compose(text, source=source)
    if root is None:
        raise SpecError(f"{source}:1: is empty; a layout needs at least page and blocks")
    if isinstance(root, MappingNode) and any(isinstance(k, ScalarNode) and k.value == "card" for k, _ in root.value):
        return _card_layout(root, source, problems)
    top = mapping(root, "", _TOP_KEYS, problems)
    for needed in ("name", "page", "blocks"):
        if needed not in top and isinstance(root, MappingNode):
            problems.add(root, needed, "is missing")

    name = _name(top["name"][1], problems) if "name" in top else None
    page = _paper(top["page"][1], problems) if "page" in top else None

    margins: tuple[float, ...] = (12.0, 12.0, 12.0, 12.0)
    if "margins" in top:
        node = top["margins"][1]
        if isinstance(node, MappingNode):
            sides = mapping(node, "margins", _SIDES, problems)
            for side in _SIDES:
                if side not in sides:
                    problems.add(node, f"margins.{side}", "is missing (give all four sides, or one length)")
            got = [_length_mm(sides[s][1], f"margins.{s}", *MARGIN_RANGE_MM, problems) if s in sides else None
                   for s in _SIDES]
            if all(g is not None for g in got):
                margins = tuple(got)
        else:
            one = _length_mm(node, "margins", *MARGIN_RANGE_MM, problems)
            if one is not None:
                margins = (one,) * 4

    columns: list[Column] = []
    if "columns" in top:
        node = top["columns"][1]
        if not isinstance(node, MappingNode) or not node.value:
            problems.add(node, "columns", "should map column names to relative widths, e.g. {left: 1, right: 1}")
        else:
            seen: dict[str, int] = {}
            for k_node, v_node in node.value:
                col = k_node.value if isinstance(k_node, ScalarNode) else ""
                key = f"columns.{col}"
                if not re.fullmatch(r"[a-z][a-z0-9_-]*", col) or col == FULL:
                    problems.add(k_node, key, "a column name is a lower-case word other than 'full'")
                    continue
                if col in seen:
                    problems.add(k_node, key, given_twice(seen[col]))
                    continue
                seen[col] = k_node.start_mark.line + 1
                share_text = _scalar(v_node, key, problems)
                try:
                    share = float(share_text) if share_text is not None else None
                except ValueError:
                    share = None
                if share_text is not None and (share is None or not 0.2 <= share <= 5.0):
                    problems.add(v_node, key, f"{excerpt(share_text)} should be a relative width from 0.2 to 5")
                    continue
                if share is not None:
                    columns.append(Column(name=col, share=share))
    gutter = 6.0
    if "gutter" in top:
        got_gutter = _length_mm(top["gutter"][1], "gutter", *GUTTER_RANGE_MM, problems)
        gutter = got_gutter if got_gutter is not None else gutter

    blocks = _blocks(top["blocks"][1], {c.name for c in columns}, problems) if "blocks" in top else ()
    if page is not None and columns and "columns" in top:
        _check_column_widths(top["columns"][1], page, margins, gutter, columns, problems)
    problems.raise_if_any()
    return Layout(name=name, source=source, page_size=page, margins_mm=margins, columns=tuple(columns),
                  gutter_mm=gutter, blocks=blocks)


def _check_column_widths(node: Node, page: str, margins, gutter: float, columns: list[Column],
                         problems: Problems) -> None:
    """Every column wide enough for its blocks' tables at the sheet's type size (6.5 pt at the least)."""
    frame_mm = PAGE_SIZES_PT[page][0] / _PT_PER_MM - margins[1] - margins[3]
    usable = frame_mm - gutter * (len(columns) - 1)
    total = sum(c.share for c in columns)
    for c in columns:
        width = usable * c.share / total
        if width < COLUMN_MIN_MM:
            problems.add(node, f"columns.{c.name}", f"would be {max(width, 0):.0f} mm wide, too narrow: each column "
                                                  f"needs at least {COLUMN_MIN_MM:g} mm for its tables at a readable "
                                                  "size; give it a larger share or use fewer columns")


def _blocks(node: Node, column_names: set[str], problems: Problems) -> tuple[BlockPlacement, ...]:
    if not isinstance(node, SequenceNode) or not node.value:
        problems.add(node, "blocks", "should be a list of block names or {block: NAME, column: COLUMN}")
        return ()
    placed: list[BlockPlacement] = []
    where: dict[str, int] = {}
    for i, item in enumerate(node.value):
        key = f"blocks[{i + 1}]"
        column, new_page, name_node = FULL, False, item
        if isinstance(item, MappingNode):
            fields = mapping(item, key, _BLOCK_KEYS, problems)
            if "block" not in fields:
                problems.add(item, f"{key}.block", "is missing")
                continue
            name_node = fields["block"][1]
            if "column" in fields:
                col_node = fields["column"][1]
                column = _scalar(col_node, f"{key}.column", problems) or FULL
                if column != FULL and column not in column_names:
                    declared = sorted(column_names) + [FULL]
                    problems.add(col_node, f"{key}.column", f"{excerpt(column)} is not a declared column"
                                 f"{_suggest(column, declared)}; use one of: {', '.join(declared)}")
                    column = FULL
            if "new_page" in fields:
                new_page = _flag(fields["new_page"][1], f"{key}.new_page", problems)
        name = _scalar(name_node, key, problems)
        if name is None:
            continue
        if name not in BLOCK_NAMES:
            problems.add(name_node, key, f"unknown block '{name}'{_suggest(name, BLOCK_NAMES)}; "
                                         f"blocks: {', '.join(BLOCK_NAMES)}")
            continue
        if name in where:
            problems.add(name_node, key, f"block '{name}' is placed twice (also blocks[{where[name]}])")
            continue
        where[name] = i + 1
        placed.append(BlockPlacement(name=name, column=column, new_page=new_page))
    for needed in REQUIRED_BLOCKS:
        if placed and needed not in where:
            problems.add(node, "blocks", f"must include '{needed}': every sheet carries the safety cautions")
    return tuple(placed)


# ------------------------------------------------------------- card layouts
def _card_layout(root: MappingNode, source: str, problems: Problems) -> CardLayout:
    """Check a card layout (a file with ``card:``) completely, as ``parse_layout`` does a sheet."""
    top = mapping(root, "", _CARD_TOP_KEYS, problems)
    for needed in ("name", "page", "front"):
        if needed not in top:
            problems.add(root, needed, "is missing")
    name = _name(top["name"][1], problems) if "name" in top else None
    page = _paper(top["page"][1], problems) if "page" in top else None
    card = _card_size(top["card"][1], problems) if "card" in top else None
    margins = 10.0
    if "margins" in top:
        got = _length_mm(top["margins"][1], "margins", *MARGIN_RANGE_MM, problems)
        margins = got if got is not None else margins
    gap = 12.0
    if "gap" in top:
        got = _length_mm(top["gap"][1], "gap", *CARD_GAP_RANGE_MM, problems)
        gap = got if got is not None else gap
    balance = _flag(top["balance"][1], "balance", problems) if "balance" in top else True
    where: dict[str, str] = {}
    front = _card_side(top["front"][1], "front", where, problems) if "front" in top else ()
    back = _card_side(top["back"][1], "back", where, problems) if "back" in top else ()
    if (front or back) and "cautions" not in where:
        problems.add(top.get("front", (root, root))[1], "front",
                     "the cautions block must be on the front or the back: every card carries them")
    if "card" in top and card is not None:
        side = "front" if "cautions" in front else "back"
        _check_card_room(top["card"][1], "card", card, side, problems)
    larger = None
    if "larger" in top:
        larger = _larger(top["larger"][1], card, margins, gap, problems)
    problems.raise_if_any()
    layout = CardLayout(name=name, source=source, page_size=page, card_mm=card, margins_mm=margins, gap_mm=gap,
                        front=front, back=back, balance=balance)
    if layout.per_sheet == 0:
        (w, h), line = card, top["card"][0].start_mark.line + 1
        raise SpecError(f"{source}:{line}: card: {w:g} × {h:g} mm does not fit on {page} paper with {margins:g} mm "
                        "margins; make the card or the margins smaller")
    if larger is not None:
        big_card, big_margins, big_gap = larger
        big = replace(layout, card_mm=big_card, margins_mm=big_margins, gap_mm=big_gap)
        if big.per_sheet == 0:
            line = top["larger"][0].start_mark.line + 1
            raise SpecError(f"{source}:{line}: larger: {big_card[0]:g} × {big_card[1]:g} mm does not fit on {page} "
                            f"paper with {big_margins:g} mm margins; make the larger card or its margins smaller")
        layout = replace(layout, larger=big)
    return layout


def _check_card_room(node: Node, key: str, card: tuple[float, float], side: str, problems: Problems) -> None:
    """A card must hold its footer line and, on the side that carries them, the cautions, all at 6 pt."""
    w, h = card
    where = node
    keys = {"width": key, "height": key}
    if isinstance(node, MappingNode):
        fields = {k.value: (k, v) for k, v in node.value if isinstance(k, ScalarNode)}
        keys = {k: f"{key}.{k}" for k in keys}
        where = {k: fields[k][1] for k in ("width", "height") if k in fields}
    spot = (lambda k: where[k]) if isinstance(where, dict) else (lambda k: where)
    if w < CARD_MIN_WIDTH_MM - 1e-9:
        problems.add(spot("width"), keys["width"],
                     f"{w:g} mm is too narrow: a card sets its footer line whole at 6 pt, which needs a card at "
                     f"least {CARD_MIN_WIDTH_MM:g} mm wide")
    need = card_side_min_mm(CARD_FRONT_HEAD_PT if side == "front" else CARD_BACK_HEAD_PT)
    if h < need - 1e-9:
        problems.add(spot("height"), keys["height"],
                     f"{h:g} mm is too short: the cautions at 6 pt with the {side}'s header and footer need a card "
                     f"at least {math.ceil(need):g} mm tall")


def _larger(node: Node, card: tuple[float, float] | None, margins: float, gap: float,
            problems: Problems) -> tuple[tuple[float, float], float, float] | None:
    """``larger:``: the card a design moves to when its own card cannot set it at 6 pt with every step."""
    if not isinstance(node, MappingNode):
        problems.add(node, "larger", "should be {card: .., margins: .., gap: ..}: the card a design too full for "
                                     "this one is set on")
        return None
    fields = mapping(node, "larger", _LARGER_KEYS, problems)
    if "card" not in fields:
        problems.add(node, "larger.card", "is missing")
        return None
    size_node = fields["card"][1]
    size = _card_size(size_node, problems, key="larger.card")
    if "margins" in fields:
        got = _length_mm(fields["margins"][1], "larger.margins", *MARGIN_RANGE_MM, problems)
        margins = got if got is not None else margins
    if "gap" in fields:
        got = _length_mm(fields["gap"][1], "larger.gap", *CARD_GAP_RANGE_MM, problems)
        gap = got if got is not None else gap
    if size is None:
        return None
    if card is not None and (size[0] < card[0] or size[1] < card[1] or size == card):
        problems.add(size_node, "larger.card", f"{size[0]:g} × {size[1]:g} mm is not larger than the card "
                                               f"({card[0]:g} × {card[1]:g} mm) in both directions")
        return None
    return size, margins, gap


def _card_size(node: Node, problems: Problems, *, key: str = "card") -> tuple[float, float] | None:
    """A named card size or {width, height}; None when it is wrong (the problem is noted)."""
    if isinstance(node, MappingNode):
        sides = mapping(node, key, _CARD_SIZE_KEYS, problems)
        got = []
        for side in _CARD_SIZE_KEYS:
            if side not in sides:
                problems.add(node, f"{key}.{side}", "is missing")
                got.append(None)
            else:
                got.append(_length_mm(sides[side][1], f"{key}.{side}", *CARD_RANGE_MM, problems))
        return (got[0], got[1]) if None not in got else None
    text = _scalar(node, key, problems)
    if text is None:
        return None
    if text not in CARD_SIZES_MM:
        problems.add(node, key, f"{excerpt(text)} is not a card size{_suggest(text, CARD_SIZES_MM)}; known: "
                                f"{', '.join(CARD_SIZES_MM)}, or {{width: 100 mm, height: 140 mm}}")
        return None
    return CARD_SIZES_MM[text]


def _card_side(node: Node, side: str, where: dict[str, str], problems: Problems) -> tuple[str, ...]:
    """One side's block names, each block placed once over both sides (``where`` remembers them)."""
    if not isinstance(node, SequenceNode) or not node.value:
        problems.add(node, side, f"should be a list of card blocks: {', '.join(CARD_BLOCK_NAMES)}")
        return ()
    names = []
    for i, item in enumerate(node.value):
        key = f"{side}[{i + 1}]"
        name = _scalar(item, key, problems)
        if name is None:
            continue
        if name not in CARD_BLOCK_NAMES:
            problems.add(item, key, f"unknown card block '{name}'{_suggest(name, CARD_BLOCK_NAMES)}; "
                                    f"card blocks: {', '.join(CARD_BLOCK_NAMES)}")
            continue
        if name in where:
            problems.add(item, key, f"block '{name}' is placed twice (also {where[name]})")
            continue
        where[name] = key
        names.append(name)
    return tuple(names)
