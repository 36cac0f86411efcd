"""E-mail messages (.eml) read with the standard library's e-mail package.

The body is the text/plain part, or the text/html part read as HTML when there
is no plain one; attachments are listed in the metadata, not read. Greetings,
sign-offs, signatures, disclaimers and quoted earlier messages stay in the text and
are marked (``mailparts``), so that no method selects them. The subject
is the title and the Date header the date.
"""

from __future__ import annotations

from email import policy
from email.message import EmailMessage
from email.parser import BytesParser

from summarize.reading.limits import LimitExceeded, current_limits
from summarize.reading.readers.blocks import DATE_IN_EMAIL, Extract
from summarize.reading.readers.dates import date_problem, iso_date
from summarize.reading.readers.decoding import decode_text
from summarize.reading.readers.errors import ReadError
from summarize.reading.readers.html import html_extract
from summarize.reading.readers.mailparts import mark_parts
from summarize.reading.readers.text import plain_text_blocks

_ADDRESS_HEADERS = ("from", "to", "cc")
_KNOWN_HEADERS = ("from", "to", "subject", "date", "message-id")


def read_eml(raw: bytes) -> Extract:
    if not raw.strip():
        raise ReadError("empty file")
    message = BytesParser(policy=policy.default).parsebytes(raw)
    if not any(message.get(header) for header in _KNOWN_HEADERS):
        raise ReadError("not an e-mail message (no From, To, Subject or Date header)")
    limits = current_limits()
    if sum(1 for _ in message.walk()) > limits.max_parts:
        raise LimitExceeded("e-mail MIME part count", "max_parts", limits.max_parts)
    body_part = message.get_body(preferencelist=("plain", "html"))
    if body_part is None:
        raise ReadError("e-mail has no text body")
    body, encoding = _body_text(body_part)
    # A base64 body decodes to less than it takes, but quoted-printable or a
    # declared charset can make the text larger than the file.
    if len(body) > limits.max_unpacked_bytes:
        raise LimitExceeded("e-mail body", "max_unpacked_bytes", limits.max_unpacked_bytes)
    if not body.strip():
        raise ReadError("e-mail body is empty")
    if body_part.get_content_subtype() == "html":
        extract = html_extract(body, encoding)
    else:
        extract = Extract(blocks=plain_text_blocks(body), encoding=encoding)
    extract.blocks = mark_parts(extract.blocks)
    extract.title = _header(message, "subject") or extract.title
    date_header = _header(message, "date")
    extract.date = iso_date(date_header)
    extract.date_source = DATE_IN_EMAIL if extract.date else None
    problem = date_problem(date_header)
    if problem:
        extract.warnings.append(f"Date header: {problem}")
    extract.metadata.update(_metadata(message))
    return extract


def _body_text(part: EmailMessage) -> tuple[str, str]:
    """The body as text with the charset it declares; a missing or unknown
    charset is worked out from the bytes like a text file's."""
    try:
        return part.get_content(), part.get_content_charset() or "us-ascii"
    except (LookupError, UnicodeError):
        payload = part.get_payload(decode=True) or b""
        try:
            return decode_text(payload)
        except ReadError as exc:
            raise ReadError(f"e-mail body: {exc}") from None


def _header(message: EmailMessage, name: str) -> str | None:
    try:
        value = message.get(name)
    except (ValueError, TypeError, IndexError):
        return None
    return " ".join(str(value).split()) if value is not None else None


def _metadata(message: EmailMessage) -> dict:
    metadata = {}
    for name in _ADDRESS_HEADERS:
        value = _header(message, name)
        if value:
            metadata[name] = value
    attachments = [part.get_filename() or part.get_content_type() for part in message.iter_attachments()]
    if attachments:
        metadata["attachments"] = attachments
    return metadata
