"""The source text of a document page cut into pieces at every summary span's ends.

Each piece knows which spans cover it, so the page can mark it, say which summaries
use it, and light up all pieces of one span when a summary sentence is clicked. A
span's first piece carries the span's anchor (``span_anchor``; several when spans
start together), so a plain link to ``#anchor`` scrolls there without any script.
"""

from __future__ import annotations

from collections import defaultdict
from dataclasses import dataclass, field


def span_anchor(start: int, end: int) -> str:
    return f"src-{start}-{end}"


@dataclass
class SourcePiece:
    text: str
    spans: list[str] = field(default_factory=list)
    anchors: list[str] = field(default_factory=list)
    users: list[str] = field(default_factory=list)
    closes: list[str] = field(default_factory=list)


class SourceMarks:
    """Cut ``text`` at the ends of ``uses``: ``(start, end, user)`` triples, where
    ``user`` is a short code of the summary using that span. Spans outside the text
    are clipped to it."""

    def __init__(self, text: str, uses: list[tuple[int, int, str]]):
        self.text = text
        self.uses = uses

    def pieces(self) -> list[SourcePiece]:
        length = len(self.text)
        users: dict[tuple[int, int], list[str]] = defaultdict(list)
        for start, end, user in self.uses:
            start, end = max(0, min(start, length)), max(0, min(end, length))
            if start < end and user not in users[(start, end)]:
                users[(start, end)].append(user)
        cuts = sorted({0, length} | {p for span in users for p in span})
        first_piece_seen: set[tuple[int, int]] = set()
        pieces = []
        for low, high in zip(cuts, cuts[1:]):
            covering = sorted(span for span in users if span[0] <= low and high <= span[1])
            piece = SourcePiece(self.text[low:high], spans=[span_anchor(*span) for span in covering])
            for span in covering:
                if span not in first_piece_seen:
                    first_piece_seen.add(span)
                    piece.anchors.append(span_anchor(*span))
                if span[1] == high:
                    piece.closes.append(" ".join(users[span]))
            piece.users = sorted({user for span in covering for user in users[span]})
            pieces.append(piece)
        return pieces
