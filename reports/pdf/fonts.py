"""Embedded fonts for the documents: Noto Sans, with a fallback face per script it lacks.

Every face is a TrueType file shipped by a PyPI package (``manimgx-fonts`` for Noto Sans and
its Arabic, Hebrew and Devanagari companions, ``justmytype-intl-cjk`` for Noto Sans SC), so a
fresh ``pip install`` prints the same names on every machine. reportlab embeds the subset of
glyphs a document uses. Free text goes through `runs`, which puts each character in the first
face that has a glyph for it and orders right-to-left words for display.

Right-to-left words are written here: Arabic letters take their joined shapes as Unicode
presentation forms (``arabic-reshaper``), each right-to-left word is written right to left and
each run of such words is ordered for a left-to-right page (`display_order`). Every glyph then
has a code point of its own, so the text extracts: Hebrew as typed, Arabic as presentation
forms whose compatibility normalisation (NFKC) is the typed text; a text extractor gives the
words of a run in the order they stand on the page. Devanagari, whose vowel signs and
conjuncts are reordered and combined, is shaped by HarfBuzz (``uharfbuzz``) in reportlab; its
conjuncts have no code point of their own and extract as private-use characters. Every other
face is set glyph for glyph, so its text extracts exactly as typed.
"""

from __future__ import annotations

import functools
import hashlib
import io
import os
import re
import tempfile
import threading
import unicodedata
from dataclasses import dataclass
from pathlib import Path
from xml.sax.saxutils import escape

import justmytype_intl_cjk
import manimgx_fonts
from arabic_reshaper import ArabicReshaper
from reportlab.lib.fonts import addMapping
from reportlab.pdfbase import pdfmetrics
from reportlab.pdfbase.ttfonts import TTFont

FONT = "ShopSans"
FONT_BOLD = "ShopSans-Bold"
FONT_ITALIC = "ShopSans-Italic"
FONT_BOLD_ITALIC = "ShopSans-BoldItalic"
BOLD_WEIGHT = 700  # the bold instance cut from Noto Sans's weight axis (400-700)

_MANIMGX = Path(manimgx_fonts.__file__).parent
_CJK = Path(justmytype_intl_cjk.__file__).parent / "fonts" / "ofl" / "notosanssc"
_UPRIGHT = _MANIMGX / "NotoSans[wght].ttf"
_ITALIC = _MANIMGX / "NotoSans-Italic[wght].ttf"


@dataclass(frozen=True)
class Fallback:
    """A face for a script Noto Sans lacks: its registered name, file and code point ranges."""

    name: str
    path: Path
    ranges: tuple[tuple[int, int], ...]
    shaped: bool  # shaped by HarfBuzz: Devanagari's reordered vowel signs and conjuncts


FALLBACKS = (
    Fallback(
        "ShopSans-Arabic",
        _MANIMGX / "NotoSansArabic[wght].ttf",
        ((0x0600, 0x06FF), (0x0750, 0x077F), (0x08A0, 0x08FF), (0xFB50, 0xFDFF), (0xFE70, 0xFEFF)),
        shaped=False,
    ),
    Fallback(
        "ShopSans-Hebrew",
        _MANIMGX / "NotoSansHebrew[wght].ttf",
        ((0x0590, 0x05FF), (0xFB1D, 0xFB4F)),
        shaped=False,
    ),
    Fallback(
        "ShopSans-Devanagari",
        _MANIMGX / "NotoSansDevanagari[wght].ttf",
        ((0x0900, 0x097F), (0xA8E0, 0xA8FF), (0x1CD0, 0x1CFF)),
        shaped=True,
    ),
    Fallback(
        "ShopSans-CJK",
        _CJK / "NotoSansSC[wght].ttf",
        (
            (0x2E80, 0x2FDF),
            (0x3000, 0x30FF),
            (0x3100, 0x31FF),
            (0x3400, 0x4DBF),
            (0x4E00, 0x9FFF),
            (0xF900, 0xFAFF),
            (0xFF00, 0xFFEF),
        ),
        shaped=False,
    ),
)
RIGHT_TO_LEFT = frozenset({"R", "AL"})
_WORDS = re.compile(r"(\s+)")
_RESHAPER = ArabicReshaper()
_lock = threading.Lock()
_registered = False


class UnshapedTTFont(TTFont):
    """A TrueType face that reportlab's shaping passes over, setting it glyph for glyph.

    reportlab shapes a word with the face of its first character and leaves a word alone when
    that face has no HarfBuzz font (AttributeError). Kerning and ligatures would change nothing
    a reader needs here, but a ligature or a glyph two code points share (CJK radicals) would
    extract as another character.
    """

    def hbFont(self, fontSize=10):
        raise AttributeError("set glyph for glyph")


def _bold_file() -> Path:
    """Noto Sans cut at the bold weight, made once and kept in the temporary directory.

    Cutting an instance takes seconds, so it is cached under a name that holds the source
    file's digest: a new font release makes a new file.
    """
    source = _UPRIGHT.read_bytes()
    digest = hashlib.sha256(source).hexdigest()[:16]
    target = Path(tempfile.gettempdir()) / f"bench-record-notosans-{BOLD_WEIGHT}-{digest}.ttf"
    if target.exists():
        return target
    from fontTools.ttLib import TTFont as ToolsFont
    from fontTools.varLib import instancer

    bold = instancer.instantiateVariableFont(
        ToolsFont(io.BytesIO(source)), {"wght": BOLD_WEIGHT}, updateFontNames=False
    )
    handle, partial = tempfile.mkstemp(dir=target.parent, suffix=".ttf")
    with os.fdopen(handle, "wb") as out:
        bold.save(out)
    os.replace(partial, target)
    return target


def register() -> None:
    """Register the text faces with reportlab (once per process)."""
    global _registered
    if _registered:
        return
    with _lock:
        if _registered:
            return
        pdfmetrics.registerFont(UnshapedTTFont(FONT, str(_UPRIGHT)))
        pdfmetrics.registerFont(UnshapedTTFont(FONT_BOLD, str(_bold_file())))
        pdfmetrics.registerFont(UnshapedTTFont(FONT_ITALIC, str(_ITALIC)))
        pdfmetrics.registerFont(UnshapedTTFont(FONT_BOLD_ITALIC, str(_ITALIC)))
        addMapping(FONT, 0, 0, FONT)
        addMapping(FONT, 1, 0, FONT_BOLD)
        addMapping(FONT, 0, 1, FONT_ITALIC)
        addMapping(FONT, 1, 1, FONT_BOLD_ITALIC)
        _registered = True


def _fallback_face(fallback: Fallback) -> TTFont:
    """The fallback's face, registered on first use (the Chinese face alone is 17 MB)."""
    with _lock:
        if fallback.name not in pdfmetrics.getRegisteredFontNames():
            kind = TTFont if fallback.shaped else UnshapedTTFont
            face = kind(fallback.name, str(fallback.path))
            pdfmetrics.registerFont(face)
            # Bold and italic mark-up keep the script's face (it has only the regular weight).
            for bold in (0, 1):
                for italic in (0, 1):
                    addMapping(fallback.name, bold, italic, fallback.name)
    return pdfmetrics.getFont(fallback.name)


@functools.lru_cache(maxsize=8192)
def face_for(character: str) -> str | None:
    """The fallback face that draws `character`, or None when Noto Sans has it (or nobody)."""
    register()
    point = ord(character)
    if point in pdfmetrics.getFont(FONT).face.charToGlyph or character.isspace():
        return None
    for fallback in FALLBACKS:
        if any(low <= point <= high for low, high in fallback.ranges):
            if point in _fallback_face(fallback).face.charToGlyph:
                return fallback.name
    return None


def _right_to_left(word: str) -> bool:
    directions = {unicodedata.bidirectional(c) for c in word}
    return bool(directions & RIGHT_TO_LEFT) and "L" not in directions


def display_order(line: str) -> str:
    """`line` with each run of right-to-left words reversed, for a left-to-right page.

    HarfBuzz writes the letters of each right-to-left word right to left; the order of the
    words is the bidirectional algorithm's (Unicode Standard Annex 9, rule L2) for a line whose
    base direction is left to right, applied to whole words: a run of right-to-left words,
    with the spaces and neutral words (digits, punctuation) between them, reads right to left.
    A run that wraps onto a second line keeps this order across the break. Each right-to-left
    word is reshaped (Arabic joining) and written right to left, marks kept after their letter.
    """
    tokens = _WORDS.split(line)
    words = [index for index in range(0, len(tokens), 2) if tokens[index]]
    out = list(tokens)
    index = 0
    while index < len(words):
        if not _right_to_left(tokens[words[index]]):
            index += 1
            continue
        end = index
        while end + 1 < len(words) and not _strong_left(tokens[words[end + 1]]):
            end += 1
        while end > index and not _right_to_left(tokens[words[end]]):
            end -= 1  # trailing neutral words stay where they are
        first, last = words[index], words[end]
        out[first : last + 1] = [
            _written_right_to_left(token) if _right_to_left(token) else token
            for token in tokens[first : last + 1][::-1]
        ]
        index = end + 1
    return "".join(out)


def _written_right_to_left(word: str) -> str:
    """A right-to-left word in joined shapes, its letters (with their marks) reversed."""
    clusters: list[str] = []
    for character in _RESHAPER.reshape(word):
        if clusters and unicodedata.combining(character):
            clusters[-1] += character
        else:
            clusters.append(character)
    return "".join(reversed(clusters))


def _strong_left(word: str) -> bool:
    return "L" in {unicodedata.bidirectional(c) for c in word}


def runs(value: str) -> str:
    """Plain text as paragraph mark-up: escaped, each script in its face, in display order."""
    lines = []
    for line in value.split("\n"):
        ordered = display_order(line)
        pieces: list[str] = []
        current: str | None = None
        chunk: list[str] = []
        for character in ordered:
            face = face_for(character)
            if face != current and chunk:
                pieces.append(_wrap(current, "".join(chunk)))
                chunk = []
            current = face
            chunk.append(character)
        if chunk:
            pieces.append(_wrap(current, "".join(chunk)))
        lines.append("".join(pieces))
    return "<br/>".join(lines)


def _wrap(face: str | None, words: str) -> str:
    escaped = escape(words)
    return f'<font name="{face}">{escaped}</font>' if face else escaped
