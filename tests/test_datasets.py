"""The ACLSum loader against the package's own data (Takeshita et al. 2024, the
``aclsum`` package): split sizes, abstract as reference, body without abstract."""

from __future__ import annotations

from aclsum import ACLSum

from summarize.reading.datasets import load_aclsum


def test_splits_and_limit_follow_the_package():
    assert len(load_aclsum("val")) == len(ACLSum("val"))
    assert len(load_aclsum(limit=7)) == 7
    assert [d.metadata["anthology_id"] for d in load_aclsum("test", limit=3)] == [p.id for p in list(ACLSum("test"))[:3]]


def test_reference_is_the_abstract_and_text_leaves_it_out():
    for document, paper in zip(load_aclsum("train", limit=5), ACLSum("train")):
        parse = paper.get_fulltext_parse()
        abstract = " ".join(p["text"] for p in parse["pdf_parse"]["abstract"])
        assert document.reference_summary.replace("\n", " ") == abstract.strip()
        assert abstract[:80] not in document.text
        first_paragraph = parse["pdf_parse"]["body_text"][0]["text"].strip()
        assert first_paragraph in document.text
        for heading in document.headings:
            assert "\n" not in heading.slice(document.text) and heading.slice(document.text).strip()
