"""The sheet's typeface: DejaVu Sans, bundled and embedded.

The base-14 PDF fonts lack µ, Ω, ≤ and friends in their standard encoding and
are never embedded, so a sheet would depend on the reader's fonts.  DejaVu
Sans (Bitstream Vera licence, ``sheetgen/fonts/LICENSE``) ships inside the
package and reportlab embeds the subset each sheet uses.
"""

from __future__ import annotations

from importlib import resources

REGULAR = "SheetSans"
BOLD = "SheetSans-Bold"

#: Font name -> file inside ``sheetgen/fonts``.
_FILES = {REGULAR: "DejaVuSans.ttf", BOLD: "DejaVuSans-Bold.ttf"}

#: Every non-ASCII character the sheet prints; ``missing_glyphs`` checks them.
SHEET_GLYPHS = "µΩ°±–×≤≥→·²"


def register() -> None:
    """Register both faces and their family with reportlab; safe to call again.

    The family also becomes reportlab's default graphics font: every vector
    drawing opens by selecting that default, and left at Helvetica it would put
    an unembedded font into the PDF even though no glyph is drawn with it.
    """
    from reportlab.pdfbase import pdfmetrics
    from reportlab.pdfbase.ttfonts import TTFont

    if REGULAR in pdfmetrics.getRegisteredFontNames():
        return
    folder = resources.files("sheetgen") / "fonts"
    for name, filename in _FILES.items():
        with resources.as_file(folder / filename) as path:
            pdfmetrics.registerFont(TTFont(name, str(path)))
    pdfmetrics.registerFontFamily(REGULAR, normal=REGULAR, bold=BOLD, italic=REGULAR, boldItalic=BOLD,
                                  baseFontFor="graphics")


def missing_glyphs(text: str, *, font: str = REGULAR) -> str:
    """The characters of ``text`` the font cannot draw (reportlab would print a box), each once, in the
    order written (a right-to-left reader of a message still finds them as typed)."""
    from reportlab.pdfbase import pdfmetrics

    register()
    face = pdfmetrics.getFont(font).face
    return "".join(dict.fromkeys(ch for ch in text if ord(ch) not in face.charToGlyph))


def unprintable(text: str) -> str:
    """The characters of ``text`` either face cannot draw, in the order written: what a title set in bold
    and quoted in the regular face would print as boxes."""
    return "".join(dict.fromkeys(missing_glyphs(text, font=BOLD) + missing_glyphs(text, font=REGULAR)))
