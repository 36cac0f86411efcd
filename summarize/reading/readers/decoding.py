"""Bytes to text for the text formats.

Order of attempts: byte-order mark (UTF-32, UTF-8, UTF-16), strict UTF-8, UTF-16
without a mark when the NUL pattern says so, an encoding the file itself declares
(HTML only), strict cp1252, and finally charset-normalizer's best guess. One
exception to the order: when the cp1252 reading is mostly accented letters (what
Greek or Cyrillic single-byte text looks like read as cp1252), charset-normalizer
is asked first. Content that is not text at all is refused rather than decoded
into noise.
"""

from __future__ import annotations

import codecs

import charset_normalizer

from summarize.reading.readers.errors import ReadError

# UTF-32 marks first: the UTF-32-LE mark begins with the UTF-16-LE one.
_BYTE_ORDER_MARKS = (
    (codecs.BOM_UTF32_LE, "utf-32"),
    (codecs.BOM_UTF32_BE, "utf-32"),
    (codecs.BOM_UTF8, "utf-8-sig"),
    (codecs.BOM_UTF16_LE, "utf-16"),
    (codecs.BOM_UTF16_BE, "utf-16"),
)

# Control characters that ordinary text does not contain (tab, newline, form feed
# and carriage return are fine; ESC and DOS end-of-file turn up in old files).
_ODD_CONTROL_BYTES = bytes(sorted(set(range(0x20)) - {0x09, 0x0A, 0x0C, 0x0D, 0x1A, 0x1B}))
_MAX_CONTROL_RATIO = 0.05
# Share of the high (or low) bytes of UTF-16 code units that must be NUL before
# text without a byte-order mark is taken for mostly-Latin UTF-16.
_UTF16_NUL_SHARE = 0.4
# Above this share of non-ASCII letters a cp1252 reading is double-checked.
_MAX_ACCENTED_SHARE = 0.4
_MIN_LETTERS_TO_JUDGE = 20


def decode_text(raw: bytes, declared: str | None = None) -> tuple[str, str]:
    """Return ``(text, encoding)``. Raises ``ReadError`` for empty files, binary
    content and bytes no known encoding fits. ``declared`` is an encoding named
    inside the file (an HTML meta charset); it is tried after UTF-8."""
    if not raw.strip():
        raise ReadError("empty file")
    for mark, encoding in _BYTE_ORDER_MARKS:
        if raw.startswith(mark):
            return _decode_or_fail(raw, encoding), encoding
    if b"\x00" in raw:
        encoding = _utf16_by_nul_pattern(raw)
        if encoding is None:
            raise ReadError("binary content, not text")
        try:
            return _checked_text(raw.decode(encoding)), encoding
        except UnicodeDecodeError:
            raise ReadError("binary content, not text") from None
    if _control_ratio(raw) > _MAX_CONTROL_RATIO:
        raise ReadError("binary content, not text")
    candidates = ["utf-8"]
    if declared:
        candidates.append(_as_web_encoding(declared))
    for encoding in candidates:
        try:
            return _checked_text(raw.decode(encoding)), _canonical_name(encoding)
        except (UnicodeDecodeError, LookupError):
            continue
    try:
        text = raw.decode("cp1252")
    except UnicodeDecodeError:
        return _best_guess(raw)
    if _looks_misread(text):
        return _best_guess(raw, fallback=(text, "cp1252"))
    return _checked_text(text), "cp1252"


def _looks_misread(text: str) -> bool:
    """Greek or Cyrillic bytes read as cp1252 come out as runs of accented Latin
    letters; real Western text has far fewer of them."""
    letters = [char for char in text if char.isalpha()]
    accented = sum(1 for char in letters if ord(char) > 0x7F)
    return len(letters) >= _MIN_LETTERS_TO_JUDGE and accented / len(letters) > _MAX_ACCENTED_SHARE


def _best_guess(raw: bytes, fallback: tuple[str, str] | None = None) -> tuple[str, str]:
    """charset-normalizer's most plausible decoding, else ``fallback``. With a
    fallback at hand only a single-byte code page is taken: for short samples
    the detector may propose UTF-16 for plain 8-bit text."""
    best = charset_normalizer.from_bytes(raw).best()
    if best is not None and _canonical_name(best.encoding) != "cp1252":
        if fallback is None or not _canonical_name(best.encoding).startswith("utf"):
            return _checked_text(str(best)), best.encoding
    if fallback is not None:
        return _checked_text(fallback[0]), fallback[1]
    raise ReadError("undecodable text (no known encoding fits)")


def _decode_or_fail(raw: bytes, encoding: str) -> str:
    try:
        return _checked_text(raw.decode(encoding))
    except UnicodeDecodeError as exc:
        raise ReadError(f"invalid {encoding} text at byte {exc.start}") from None


def _checked_text(text: str) -> str:
    if not text.strip():
        raise ReadError("empty file")
    return text


def _utf16_by_nul_pattern(raw: bytes) -> str | None:
    """UTF-16 of mostly Latin text has a NUL in every other byte."""
    if len(raw) % 2:
        return None
    even_nuls = raw[0::2].count(0)
    odd_nuls = raw[1::2].count(0)
    units = len(raw) // 2
    if odd_nuls >= _UTF16_NUL_SHARE * units and even_nuls < 0.05 * units:
        return "utf-16-le"
    if even_nuls >= _UTF16_NUL_SHARE * units and odd_nuls < 0.05 * units:
        return "utf-16-be"
    return None


def _control_ratio(raw: bytes) -> float:
    controls = len(raw) - len(raw.translate(None, _ODD_CONTROL_BYTES))
    return controls / len(raw)


def _as_web_encoding(declared: str) -> str:
    """Pages labelled Latin-1 or ASCII are in practice cp1252, which is how web
    browsers read them too."""
    try:
        name = codecs.lookup(declared).name
    except LookupError:
        return declared
    return "cp1252" if name in ("iso8859-1", "latin-1", "ascii") else name


def _canonical_name(encoding: str) -> str:
    """Python's name for an encoding, so 'UTF8' and 'utf_8' are both 'utf-8'."""
    return codecs.lookup(encoding).name
