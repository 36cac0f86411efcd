"""The parts of an e-mail body that are not the message: kept in the text, marked.

Each block of a plain-text body is given a part name, or None for the message itself.
Heuristics (common practice of business e-mail in English, no published rule set):

* ``quoted``: a block whose lines all start with '>', and everything from an
  attribution line ("On 3 May 2025, A. Person wrote:") or an "Original Message" /
  "From: ... Sent: ..." header of a forwarded or replied-to message onwards;
* ``greeting``: a first block of at most six words opening with Dear, Hi, Hello,
  Good morning ...;
* ``cover line``: a short block right after the greeting (or first) that only points
  at the content ("Please find the report below", "See attached");
* ``sign-off``: a block whose first line is only Regards, Kind regards, Thanks,
  Yours sincerely ... (perhaps with a name); every block after it is the
  ``signature`` (name, role, Tel.);
* ``signature``: also everything after a '-- ' delimiter line;
* ``disclaimer``: a block about the message itself stating confidentiality or
  misdirected delivery.
"""

from __future__ import annotations

import re

from summarize.reading.readers.blocks import Block

QUOTED, GREETING, COVER_LINE, SIGN_OFF, SIGNATURE, DISCLAIMER = (
    "quoted", "greeting", "cover line", "sign-off", "signature", "disclaimer",
)

_GREETING = re.compile(r"^(?:dear|hi|hello|hey|good (?:morning|afternoon|evening)|morning|greetings)\b", re.I)
_COVER = re.compile(
    r"^(?:please (?:find|see)|(?:i|we) (?:attach|enclose)|attached (?:is|are|please find)|see (?:below|attached)"
    r"|as (?:requested|promised|discussed)[,]? (?:please )?(?:find|see|here))",
    re.I,
)
# The whole first line is the sign-off, perhaps with a name: "Kind regards," or
# "Thanks, Anna"; "Thanks for the quick repair." is a sentence of the message.
_SIGN_OFF = re.compile(
    r"^(?i:(?:kind|best|warm|many)\s+(?:regards|wishes|thanks)|regards|thanks|thank you|cheers"
    r"|yours\s+(?:sincerely|faithfully|truly)|sincerely|with thanks)[,!.]?(?:\s+[A-Z][\w.'-]*){0,3},?\s*$"
)
_ATTRIBUTION = re.compile(r"^(?:on .{4,120} wrote:|-{2,}\s*original message\s*-{2,}|-{2,}\s*forwarded message\s*-{2,})", re.I)
_FORWARD_HEADER = re.compile(r"^from:\s.+\n(?:.*\n)?(?:sent|date):\s", re.I)
_DISCLAIMER = re.compile(
    r"\b(?:confidential|intended (?:solely|only) for|received this (?:e-?mail|message) in error"
    r"|disclaimer|not the intended recipient)\b",
    re.I,
)
# A disclaimer speaks of the message itself ("This e-mail and any attachments ...").
_ABOUT_THE_MESSAGE = re.compile(r"\b(?:e-?mail|message|attachments?|transmission)\b", re.I)
_SIGNATURE_DELIMITER = re.compile(r"^--\s*$")
_GREETING_WORDS = 6
_COVER_WORDS = 25


def mark_parts(blocks: list[Block]) -> list[Block]:
    """The same blocks with ``part`` set on those that are not the message."""
    marked: list[Block] = []
    tail: str | None = None
    for index, block in enumerate(blocks):
        text = block.text.strip()
        first_line = text.split("\n", 1)[0].strip()
        part = tail
        if _ATTRIBUTION.match(first_line) or _FORWARD_HEADER.match(text):
            tail = part = QUOTED
        elif all(line.lstrip().startswith(">") for line in text.split("\n")):
            part = QUOTED
        elif _DISCLAIMER.search(text) and _ABOUT_THE_MESSAGE.search(text) and tail != QUOTED:
            part = DISCLAIMER
        elif part is None:
            if _SIGNATURE_DELIMITER.match(first_line):
                tail = part = SIGNATURE
            elif index == 0 and _GREETING.match(text) and _words(text) <= _GREETING_WORDS:
                part = GREETING
            elif _SIGN_OFF.match(first_line) and index > 0:
                part, tail = SIGN_OFF, SIGNATURE
            elif _COVER.match(text) and _words(text) <= _COVER_WORDS and _opens_message(marked):
                part = COVER_LINE
        marked.append(Block(block.text, block.kind, block.level, part))
    return marked


def _opens_message(before: list[Block]) -> bool:
    return all(block.part == GREETING for block in before)


def _words(text: str) -> int:
    return len(text.split())
