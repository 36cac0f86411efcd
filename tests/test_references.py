"""Reference summaries: found, stored apart, and absent from the summarized text."""

from __future__ import annotations

import io
import json
from pathlib import Path

import docx
import pytest
from fpdf import FPDF

from store.records import Document
from summarize.reading.ingest import IngestProblem, iter_archive, read_file


def write(path: Path, content: str | bytes) -> Path:
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_bytes(content.encode("utf-8") if isinstance(content, str) else content)
    return path


def only(path: Path) -> Document:
    (document,) = read_file(path)
    return document


def heading_texts(document: Document) -> list[str]:
    return [span.slice(document.text) for span in document.headings]


REPORT_BODY = "The east abutment shows scour.\n\nRock armour is proposed."


# ---------------------------------------------------------------- sidecars


@pytest.mark.parametrize("sidecar_name", ["bridge.summary.txt", "bridge.summary.md"])
def test_sidecar_summary_is_attached_and_not_a_document(tmp_path, sidecar_name):
    write(tmp_path / "bridge.txt", REPORT_BODY)
    write(tmp_path / sidecar_name, "Scour at the **east** abutment; armour proposed.\n")
    (document,) = list(iter_archive([tmp_path]))
    expected = "Scour at the east abutment; armour proposed." if sidecar_name.endswith(".md") else (
        "Scour at the **east** abutment; armour proposed."
    )
    assert document.reference_summary == expected
    assert document.reference_source == f"sidecar:{sidecar_name}"
    assert document.text == REPORT_BODY


def test_sidecar_applies_to_binary_formats(tmp_path):
    pdf = FPDF()
    pdf.add_page()
    pdf.set_font("Helvetica", size=11)
    pdf.multi_cell(0, 6, "Scour was found at the east abutment.")
    write(tmp_path / "scour.pdf", bytes(pdf.output()))
    write(tmp_path / "scour.summary.txt", "Scour found.")
    document = only(tmp_path / "scour.pdf")
    assert (document.reference_summary, document.reference_source) == ("Scour found.", "sidecar:scour.summary.txt")


def test_sidecar_wins_over_front_matter(tmp_path):
    write(tmp_path / "note.md", f"---\nsummary: From the front matter.\n---\n{REPORT_BODY}\n")
    write(tmp_path / "note.summary.txt", "From the sidecar.")
    document = only(tmp_path / "note.md")
    assert document.reference_summary == "From the sidecar."
    assert "front matter" not in document.text


def test_empty_sidecar_is_reported_and_the_document_still_read(tmp_path):
    write(tmp_path / "bridge.txt", REPORT_BODY)
    write(tmp_path / "bridge.summary.txt", "   \n")
    problem, document = list(iter_archive([tmp_path]))
    assert str(problem) == f"{tmp_path / 'bridge.summary.txt'}: empty file"
    assert document.text == REPORT_BODY and document.reference_summary is None


# ---------------------------------------------------------------- front matter and fields


def test_front_matter_gives_title_date_summary_and_is_removed(tmp_path):
    path = write(
        tmp_path / "survey.md",
        "---\ntitle: Flood Survey\ndate: 2019-10-02\nabstract: Levels rose twice.\nowner: Team B\n---\n"
        "# Levels\n\nLevels rose in March and in May.\n",
    )
    document = only(path)
    assert document.text == "Levels\n\nLevels rose in March and in May."
    assert (document.title, document.date) == ("Flood Survey", "2019-10-02")
    assert (document.reference_summary, document.reference_source) == ("Levels rose twice.", "front-matter")
    assert document.metadata["front_matter"] == {"owner": "Team B"}


def test_invalid_front_matter_is_named_and_the_body_is_read(tmp_path):
    path = write(tmp_path / "bad.txt", "---\ntitle: [unclosed\n---\nBody.\n")
    (document,) = read_file(path)
    assert document.text == "Body."
    (warning,) = [item for item in iter_archive([path]) if isinstance(item, IngestProblem)]
    assert warning.kind == "warning"
    assert warning.reason.startswith("front matter is not valid YAML (line ")


def test_leading_rule_that_is_not_front_matter_is_kept(tmp_path):
    document = only(write(tmp_path / "rule.md", "---\n\nJust a rule above.\n\n---\n\nMore text.\n"))
    assert document.text == "Just a rule above.\n\nMore text."
    assert document.reference_summary is None


def test_record_summary_field_is_stored_apart(tmp_path):
    path = write(tmp_path / "set.jsonl", json.dumps({"text": REPORT_BODY, "summary": "Scour; armour."}) + "\n")
    document = only(path)
    assert (document.reference_summary, document.reference_source) == ("Scour; armour.", "field:summary")
    assert document.text == REPORT_BODY


# ---------------------------------------------------------------- leading sections


@pytest.mark.parametrize(
    ("name", "content", "heading"),
    [
        ("a.md", "# Abutment Report\n\n## Executive Summary\n\nScour needs armour.\n\n## Findings\n\n{body}\n", "Executive Summary"),
        ("b.txt", "Abutment Report\n\nDate: 3 June 2021\nRef: AB-12\n\nSUMMARY\nScour needs armour.\n\n1. Findings\n\n{body}\n", "SUMMARY"),
        ("c.txt", "1. Summary\n\nScour needs armour.\n\n2. Findings\n\n{body}\n", "1. Summary"),
        ("d.rst", "Abutment Report\n===============\n\nAbstract\n--------\n\nScour needs armour.\n\nFindings\n--------\n\n{body}\n", "Abstract"),
        ("e.html", "<h1>Abutment Report</h1><h2>Management Summary</h2><p>Scour needs armour.</p><h2>Findings</h2><p>{body}</p>", "Management Summary"),
        (
            "f.txt",
            "NORTH VALE WORKS DEPARTMENT\n\nABUTMENT REPORT AB-12\nScour at the east abutment of the river crossing\n"
            "Date of inspection: 3 June 2021\nReport date: 9 June 2021\nInspected by: two engineers of the structures team, "
            "with the help of a diving contractor who examined the submerged faces of the pier and abutment\n\n"
            "Executive Summary\n\nScour needs armour.\n\n1. FINDINGS\n\n{body}\n",
            "Executive Summary",
        ),
    ],
    ids=["markdown", "capitals-after-metadata", "numbered", "rst-underlined", "html-h2", "two-titles-and-long-metadata"],
)
def test_leading_summary_section_is_taken_out(tmp_path, name, content, heading):
    body = "Scour was measured at three piers."
    document = only(write(tmp_path / name, content.format(body=body)))
    assert document.reference_summary == "Scour needs armour."
    assert document.reference_source == f"section:{heading}"
    assert "Scour needs armour" not in document.text
    assert heading not in heading_texts(document)
    assert document.text.endswith(body)
    assert heading_texts(document)[-1].lower().endswith("findings")
    for span in document.headings:
        assert span.slice(document.text) in document.text.split("\n\n")


def test_docx_leading_summary_heading(tmp_path):
    word = docx.Document()
    word.add_heading("Abutment Report", level=0)
    word.add_heading("Executive Summary", level=1)
    word.add_paragraph("Scour needs armour.")
    word.add_paragraph("Costs are modest.")
    word.add_heading("Findings", level=1)
    word.add_paragraph("Scour was measured at three piers.")
    buffer = io.BytesIO()
    word.save(buffer)
    document = only(write(tmp_path / "report.docx", buffer.getvalue()))
    assert document.reference_summary == "Scour needs armour.\n\nCosts are modest."
    assert document.reference_source == "section:Executive Summary"
    assert document.text == "Abutment Report\n\nFindings\n\nScour was measured at three piers."


def test_pdf_leading_summary_heading(tmp_path):
    pdf = FPDF()
    pdf.add_page()
    pdf.set_font("Helvetica", "B", 16)
    pdf.cell(0, 10, "Close-Out Report: Relief Wells", new_x="LMARGIN", new_y="NEXT")
    pdf.set_font("Helvetica", size=11)
    pdf.multi_cell(0, 6, "Issued 3 March 2026 by the dam safety team.", new_x="LMARGIN", new_y="NEXT")
    pdf.set_font("Helvetica", "B", 16)
    pdf.cell(0, 10, "Summary", new_x="LMARGIN", new_y="NEXT")
    pdf.set_font("Helvetica", size=11)
    pdf.multi_cell(0, 6, "Scour needs armour.", new_x="LMARGIN", new_y="NEXT")
    pdf.set_font("Helvetica", "B", 16)
    pdf.cell(0, 10, "Findings", new_x="LMARGIN", new_y="NEXT")
    pdf.set_font("Helvetica", size=11)
    pdf.multi_cell(0, 6, "Scour was measured at three piers.", new_x="LMARGIN", new_y="NEXT")
    document = only(write(tmp_path / "report.pdf", bytes(pdf.output())))
    assert (document.reference_summary, document.reference_source) == ("Scour needs armour.", "section:Summary")
    assert document.text == (
        "Close-Out Report: Relief Wells\n\nIssued 3 March 2026 by the dam safety team.\n\n"
        "Findings\n\nScour was measured at three piers."
    )
    assert heading_texts(document) == ["Close-Out Report: Relief Wells", "Findings"]


def test_summary_of_costs_in_a_later_section_is_not_taken(tmp_path):
    content = (
        "# Depot Works\n\n## 1. Scope\n\nThe depot roof and yard are covered by this report in full detail.\n\n"
        "## 7. Summary of costs\n\nRoof 40k, yard 12k.\n"
    )
    document = only(write(tmp_path / "depot.md", content))
    assert document.reference_summary is None
    assert "Roof 40k, yard 12k." in document.text
    assert "7. Summary of costs" in heading_texts(document)


def test_summary_heading_after_the_document_has_begun_is_not_taken(tmp_path):
    opening = " ".join(["The depot was built in stages over many years and has grown untidily."] * 3)
    content = f"# Depot Works\n\n{opening}\n\n## Findings\n\nRoof leaks.\n\n## Summary\n\nFix the roof.\n"
    document = only(write(tmp_path / "depot.md", content))
    assert document.reference_summary is None
    assert document.text.endswith("Summary\n\nFix the roof.")


def test_leading_section_is_removed_even_when_a_sidecar_supplies_the_reference(tmp_path):
    write(tmp_path / "r.md", "## Summary\n\nScour needs armour.\n\n## Findings\n\nScour at three piers.\n")
    write(tmp_path / "r.summary.txt", "Armour the abutment.")
    document = only(tmp_path / "r.md")
    assert document.reference_summary == "Armour the abutment."
    assert document.text == "Findings\n\nScour at three piers."
    assert document.metadata["leading_summary_section"] == {"heading": "Summary", "text": "Scour needs armour."}


def test_document_that_is_only_a_summary_keeps_its_text(tmp_path):
    document = only(write(tmp_path / "short.md", "## Summary\n\nAll assets are in good order.\n"))
    assert document.reference_summary is None
    assert document.text == "Summary\n\nAll assets are in good order."
