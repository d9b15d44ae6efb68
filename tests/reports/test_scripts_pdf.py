"""Names in other scripts: printed from embedded faces, and extracted back as stored."""

from __future__ import annotations

import io
import unicodedata

import pypdf
import pytest
from reportlab.pdfbase import pdfmetrics

from reports.pdf import render_certificate, render_receipt
from reports.pdf.fonts import FONT, face_for
from tests.reports.test_certificate_pdf import certificate_snapshot
from tests.reports.test_receipt_pdf import receipt_data

# Scripts set glyph for glyph extract exactly as typed.
AS_TYPED = {
    "Polish": "Zażółć Gęślą-Jaźń",
    "Cyrillic": "Жанна Григорьевна Щукина",
    "Greek": "Αλέξανδρος Παπαδόπουλος",
    "Turkish": "Çağrı Şimşek İğdır",
    "Chinese": "王小明",
    # Devanagari without a conjunct or a vowel sign written before its consonant: HarfBuzz
    # keeps every glyph in typed order.
    "Hindi": "अनुराग",
}
# Right-to-left names: a text extractor gives each word's letters in typed order but the
# words in the order they stand on a left-to-right page (the last typed word leftmost).
RIGHT_TO_LEFT = {"Hebrew": "שרה לוי", "Arabic": "فاطمة الزهراء"}
# A conjunct (र्म) and vowel signs written before their consonant (ि): shaped from the
# Devanagari face; these glyphs have no code point, so the name does not extract as typed.
HINDI_CONJUNCTS = "अनुराग शर्मा प्रिया"
ALL_NAMES = {**AS_TYPED, **RIGHT_TO_LEFT, "Hindi with conjuncts": HINDI_CONJUNCTS}


def text_of(pdf: bytes) -> str:
    pages = pypdf.PdfReader(io.BytesIO(pdf)).pages
    return " ".join(" ".join(page.extract_text().split()) for page in pages)


def fonts_of(pdf: bytes) -> set[str]:
    """The base font names of the fonts that set some visible text."""
    names = set()

    def record(words, cm, tm, font, size):
        if words.strip() and font is not None:
            names.add(str(font["/BaseFont"]))

    for page in pypdf.PdfReader(io.BytesIO(pdf)).pages:
        page.extract_text(visitor_text=record)
    return names


def certificate_for(name: str) -> bytes:
    snapshot = certificate_snapshot()
    snapshot["customer"]["name"] = name
    snapshot["signature"]["technician"] = name
    return render_certificate(snapshot)


def receipt_for(name: str) -> bytes:
    data = receipt_data()
    data["customer"]["name"] = name
    return render_receipt(data)


def visual_words(name: str) -> str:
    return " ".join(reversed(name.split()))


@pytest.mark.parametrize("render", [certificate_for, receipt_for], ids=["certificate", "receipt"])
@pytest.mark.parametrize("script", AS_TYPED)
def test_a_name_in_this_script_extracts_as_it_was_stored(render, script):
    assert AS_TYPED[script] in text_of(render(AS_TYPED[script]))


@pytest.mark.parametrize("render", [certificate_for, receipt_for], ids=["certificate", "receipt"])
def test_a_hebrew_name_extracts_with_its_words_in_page_order(render):
    name = RIGHT_TO_LEFT["Hebrew"]
    extracted = text_of(render(name))
    assert visual_words(name) in extracted
    assert name not in extracted  # the extractor does not reorder the words back


@pytest.mark.parametrize("render", [certificate_for, receipt_for], ids=["certificate", "receipt"])
def test_an_arabic_name_extracts_as_joined_forms_of_the_stored_letters(render):
    name = RIGHT_TO_LEFT["Arabic"]
    extracted = text_of(render(name))
    # The page holds presentation forms (U+FE70-FEFF); NFKC folds them to the typed letters.
    assert any(0xFE70 <= ord(c) <= 0xFEFF for c in extracted)
    assert visual_words(name) in unicodedata.normalize("NFKC", extracted)


@pytest.mark.parametrize("script", ALL_NAMES)
def test_every_letter_of_the_name_has_a_glyph_in_the_face_that_prints_it(script):
    for character in ALL_NAMES[script]:
        if character.isspace():
            continue
        face = pdfmetrics.getFont(face_for(character) or FONT).face
        assert ord(character) in face.charToGlyph, (script, character)


def test_each_script_is_printed_from_an_embedded_face():
    fonts = fonts_of(certificate_for(" / ".join(ALL_NAMES.values())))
    for face in ("NotoSans", "NotoSansArabic", "NotoSansHebrew", "NotoSansDevanagari"):
        assert any(font.endswith(f"+{face}") or f"+{face}-" in font for font in fonts), (
            face,
            fonts,
        )
    assert any("NotoSansSC" in font for font in fonts), fonts
    assert not any("Helvetica" in font for font in fonts), fonts


def test_hindi_conjuncts_are_shaped_not_printed_letter_by_letter():
    extracted = text_of(certificate_for(HINDI_CONJUNCTS))
    # The conjunct र्म and the reordered vowel sign are single glyphs without a code point of
    # their own (private use); letter by letter the name would extract as typed.
    assert HINDI_CONJUNCTS not in extracted
    assert any(0xE000 <= ord(c) <= 0xF8FF for c in extracted)
    assert "अनुराग" in extracted


def test_mark_up_in_a_name_in_another_script_prints_as_typed():
    name = "<b>Łucja</b> & <font name=x> Ωμέγα 王"
    assert name in text_of(certificate_for(name))
