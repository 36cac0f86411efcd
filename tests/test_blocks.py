"""Assembling reader blocks into the final text and its heading spans."""

from __future__ import annotations

from store.records import Span
from summarize.reading.readers.blocks import HEADING, LIST, Block, assemble


def test_blocks_join_with_one_blank_line_and_headings_get_spans():
    text, headings = assemble(
        [
            Block("  Scope \n", HEADING, 1),
            Block("First line.  \n\n\n\nAfter a gap."),
            Block("   "),
            Block("Wrapped\nheading", HEADING, 2),
            Block("- one\n- two", LIST),
        ]
    )
    assert text == "Scope\n\nFirst line.\n\nAfter a gap.\n\nWrapped heading\n\n- one\n- two"
    assert headings == [Span(0, 5), Span(34, 49)]
    assert [span.slice(text) for span in headings] == ["Scope", "Wrapped heading"]


def test_no_blocks_give_empty_text():
    assert assemble([Block(" \n ")]) == ("", [])
