"""Ingest: every reader on files built here, bad input named, archive walking."""

from __future__ import annotations

import datetime as dt
import hashlib
import io
import json
import zipfile
from email.message import EmailMessage
from pathlib import Path

import docx
import pytest
from fpdf import FPDF
from fpdf.enums import EncryptionMethod

from store.records import Document
from summarize.reading import ingest
from summarize.reading.ingest import IngestProblem, RecordFields, UnreadableFile, iter_archive, read_file


def write(path: Path, content: str | bytes) -> Path:
    path.parent.mkdir(parents=True, exist_ok=True)
    if isinstance(content, str):
        path.write_bytes(content.encode("utf-8"))
    else:
        path.write_bytes(content)
    return path


def only(path: Path, **kwargs) -> Document:
    documents = read_file(path, **kwargs)
    assert len(documents) == 1
    return documents[0]


def heading_texts(document: Document) -> list[str]:
    return [span.slice(document.text) for span in document.headings]


def assert_text_contract(document: Document) -> None:
    """Paragraphs split by one blank line, no outer whitespace, headings alone."""
    text = document.text
    assert text == text.strip()
    assert "\n\n\n" not in text
    paragraphs = text.split("\n\n")
    for span in document.headings:
        assert span.slice(text) in paragraphs


def make_pdf(path: Path, parts: list[tuple[str, str]], title: str | None = None, created=None, **encryption) -> Path:
    """``parts`` are (kind, text): 'heading' (16 pt bold) or 'body' (11 pt)."""
    pdf = FPDF()
    pdf.add_page()
    if title:
        pdf.set_title(title)
    if created:
        pdf.set_creation_date(created)
    for kind, text in parts:
        if kind == "heading":
            pdf.set_font("Helvetica", "B", 16)
            pdf.cell(0, 10, text, new_x="LMARGIN", new_y="NEXT")
        else:
            pdf.set_font("Helvetica", size=11)
            pdf.multi_cell(0, 6, text, new_x="LMARGIN", new_y="NEXT")
    if encryption:
        pdf.set_encryption(**encryption)
    return write(path, bytes(pdf.output()))


# ---------------------------------------------------------------- plain text


def test_plain_text_keeps_paragraphs_and_reads_title_and_date_lines(tmp_path):
    path = write(
        tmp_path / "memo.txt",
        "Title: Drainage survey  \r\nDate: 12 May 2023\r\n\r\n\r\n"
        "The culverts were walked in April.\r\nTwo were blocked.\r\n\r\nFINDINGS\r\n\r\nSilt was found.\r\n",
    )
    document = only(path)
    assert document.text == (
        "Title: Drainage survey\nDate: 12 May 2023\n\n"
        "The culverts were walked in April. Two were blocked.\n\nFINDINGS\n\nSilt was found."
    )
    assert document.title == "Drainage survey"
    assert document.date == "2023-05-12"
    assert document.encoding == "utf-8"
    assert document.format == "txt"
    assert document.record_key == str(path)
    assert heading_texts(document) == ["FINDINGS"]
    assert_text_contract(document)


def test_plain_text_underlined_heading_stands_alone_without_its_underline(tmp_path):
    path = write(tmp_path / "plan.txt", "Works Plan\n==========\nResurfacing starts in June.\n")
    document = only(path)
    assert document.text == "Works Plan\n\nResurfacing starts in June."
    assert heading_texts(document) == ["Works Plan"]
    assert document.title == "Works Plan"


def test_date_line_and_numbered_sections_are_not_titles(tmp_path):
    document = only(write(tmp_path / "letter-17.txt", "21 May 2025\n\n1. Background\n\nThe valve was replaced.\n"))
    assert heading_texts(document) == ["1. Background"]
    assert document.title == "letter-17"


def test_title_falls_back_to_file_name(tmp_path):
    document = only(write(tmp_path / "site-visit-04.txt", "the pumps were tested and all ran.\n"))
    assert document.title == "site-visit-04"
    assert document.date is None


# ---------------------------------------------------------------- markdown / rst


def test_markdown_is_made_readable(tmp_path):
    path = write(
        tmp_path / "notes.md",
        "# Depot Review\n\nThe **main** shed needs a *new* roof, see [plan](http://example.invalid).\n\n"
        "## Actions\n\n- replace `gutters`\n- clear the yard\n\n1. order steel\n2. book crane\n",
    )
    document = only(path)
    assert document.text == (
        "Depot Review\n\nThe main shed needs a new roof, see plan.\n\nActions\n\n"
        "- replace gutters\n- clear the yard\n\n1. order steel\n2. book crane"
    )
    assert heading_texts(document) == ["Depot Review", "Actions"]
    assert document.title == "Depot Review"
    assert document.format == "md"
    assert_text_contract(document)


def test_rst_headings_lists_and_inline_markup(tmp_path):
    path = write(
        tmp_path / "guide.rst",
        "=============\nPump Station\n=============\n\n:Date: 2022-09-30\n\nIntro\n-----\n\n"
        "The **inlet** screen uses ``mesh`` panels.\n\n- check seals\n  every month\n- log flows\n\n"
        ".. image:: screen.png\n   :alt: screen\n",
    )
    document = only(path)
    assert document.text == (
        "Pump Station\n\nDate: 2022-09-30\n\nIntro\n\nThe inlet screen uses mesh panels.\n\n"
        "- check seals every month\n- log flows"
    )
    assert heading_texts(document) == ["Pump Station", "Intro"]
    assert document.title == "Pump Station"
    assert document.date == "2022-09-30"
    assert "=====" not in document.text and "image" not in document.text


# ---------------------------------------------------------------- html


HTML_PAGE = """<!DOCTYPE html><html><head><title>Harbour Wall Report</title>
<meta name="date" content="2021-06-15"><style>p { color: red }</style></head>
<body><nav>Home | Reports</nav><header>Site banner</header>
<h1>Harbour Wall</h1><p>The wall   was <em>inspected</em> at low tide.</p>
<h2>Damage</h2><ul><li>cracked coping</li><li>loose blocks</li></ul>
<table><tr><th>Section</th><th>Grade</th></tr><tr><td>North</td><td>C</td></tr></table>
<aside>Related links</aside><script>var tracking = 1;</script><footer>Copyright line</footer>
</body></html>"""


def test_html_keeps_content_and_drops_furniture(tmp_path):
    document = only(write(tmp_path / "wall.html", HTML_PAGE))
    assert document.text == (
        "Harbour Wall\n\nThe wall was inspected at low tide.\n\nDamage\n\n"
        "- cracked coping\n- loose blocks\n\nSection: North; Grade: C"
    )
    assert heading_texts(document) == ["Harbour Wall", "Damage"]
    assert document.title == "Harbour Wall Report"
    assert document.date == "2021-06-15"
    assert document.format == "html"
    for furniture in ("Home", "banner", "Related", "tracking", "Copyright", "color"):
        assert furniture not in document.text


def test_html_labelled_latin1_is_read_as_cp1252(tmp_path):
    page = '<html><head><meta charset="iso-8859-1"></head><body><p>Costs \u2013 \u20ac40</p></body></html>'
    document = only(write(tmp_path / "costs.html", page.encode("cp1252")))
    assert document.text == "Costs \u2013 \u20ac40"
    assert document.encoding == "cp1252"


def test_html_title_falls_back_to_first_h1(tmp_path):
    document = only(write(tmp_path / "page.htm", "<html><body><h1>Lock Gates</h1><p>Both gates leak.</p></body></html>"))
    assert document.title == "Lock Gates"
    assert document.format == "html"


# ---------------------------------------------------------------- pdf


def test_pdf_text_layer_is_reflowed_with_title_date_and_headings(tmp_path):
    path = make_pdf(
        tmp_path / "span.pdf",
        [
            ("heading", "Northern Span"),
            ("body", "The annual inspec-\ntion of the northern span found\ncorrosion at three joints."),
            ("heading", "Repairs"),
            ("body", "Joints will be grit-\nblasted and painted. Follow-\nUp visits are planned."),
        ],
        title="Span Inspection 2023",
        created=dt.datetime(2023, 5, 17, 10, 0, tzinfo=dt.UTC),
    )
    document = only(path)
    assert document.text == (
        "Northern Span\n\nThe annual inspection of the northern span found corrosion at three joints.\n\n"
        "Repairs\n\nJoints will be gritblasted and painted. Follow-Up visits are planned."
    )
    assert heading_texts(document) == ["Northern Span", "Repairs"]
    assert document.title == "Span Inspection 2023"
    assert document.date == "2023-05-17"
    assert document.metadata["pages"] == 1
    assert document.encoding is None
    assert document.format == "pdf"


class ReportWithRunningLines(FPDF):
    def header(self):
        self.set_font("Helvetica", size=9)
        self.cell(0, 8, "Coastal Works Quarterly", new_x="LMARGIN", new_y="NEXT")

    def footer(self):
        self.set_y(-15)
        self.set_font("Helvetica", size=9)
        self.cell(0, 8, f"Page {self.page_no()}")


def test_pdf_running_headers_and_page_numbers_are_dropped_and_paragraphs_cross_pages(tmp_path):
    pdf = ReportWithRunningLines()
    pdf.set_font("Helvetica", size=11)
    wide = "The sea wall at the northern end was surveyed on foot during the spring low tides and"
    for page, text in enumerate(["Survey notes.", "The groynes were counted.", "All were intact."]):
        pdf.add_page()
        pdf.set_font("Helvetica", size=11)
        if page == 1:
            pdf.multi_cell(0, 6, "showed no movement.", new_x="LMARGIN", new_y="NEXT")
        pdf.multi_cell(0, 6, text, new_x="LMARGIN", new_y="NEXT")
        if page == 0:
            pdf.multi_cell(0, 6, wide, new_x="LMARGIN", new_y="NEXT")
    document = only(write(tmp_path / "coast.pdf", bytes(pdf.output())))
    assert document.text == (
        f"Survey notes.\n\n{wide} showed no movement.\n\nThe groynes were counted.\n\nAll were intact."
    )
    assert document.metadata["pages"] == 3


def test_pdf_without_title_metadata_uses_first_line(tmp_path):
    path = make_pdf(tmp_path / "untitled.pdf", [("heading", "Tunnel Lighting"), ("body", "All lamps work.")])
    assert only(path).title == "Tunnel Lighting"


def test_pdf_without_text_layer_is_named(tmp_path):
    pdf = FPDF()
    pdf.add_page()
    pdf.rect(20, 20, 100, 60)
    path = write(tmp_path / "scan.pdf", bytes(pdf.output()))
    with pytest.raises(UnreadableFile) as caught:
        read_file(path)
    assert str(caught.value) == f"{path}: PDF has no text layer (scanned image?)"


def test_encrypted_pdf_is_named(tmp_path):
    path = make_pdf(
        tmp_path / "locked.pdf",
        [("body", "Confidential figures.")],
        owner_password="owner-pw",
        user_password="reader-pw",
        encryption_method=EncryptionMethod.RC4,
    )
    with pytest.raises(UnreadableFile, match=r"PDF is encrypted$"):
        read_file(path)


def test_broken_pdf_is_named(tmp_path):
    with pytest.raises(UnreadableFile, match=r": not a valid PDF \(no PDF header\)$"):
        read_file(write(tmp_path / "fake.pdf", b"this is not a pdf"))
    good = make_pdf(tmp_path / "good.pdf", [("body", "Some text.")]).read_bytes()
    with pytest.raises(UnreadableFile, match=r": not a valid PDF \("):
        read_file(write(tmp_path / "cut.pdf", good[: len(good) // 3]))


# ---------------------------------------------------------------- docx


def make_docx(path: Path, title: str | None = "Culvert Review") -> Path:
    document = docx.Document()
    if title is not None:
        document.core_properties.title = title
    document.core_properties.created = dt.datetime(2022, 11, 3, 9, 0)
    document.add_heading("Culvert Survey", level=1)
    document.add_paragraph("The culvert under the lane is sound.")
    document.add_heading("Actions", level=2)
    document.add_paragraph("clear the inlet", style="List Bullet")
    document.add_paragraph("inspect the outlet", style="List Bullet")
    document.add_paragraph("order grating", style="List Number")
    document.add_paragraph("fit grating", style="List Number")
    table = document.add_table(rows=2, cols=2)
    for (row, column), value in {(0, 0): "Item", (0, 1): "Cost", (1, 0): "Dredging", (1, 1): "400"}.items():
        table.cell(row, column).text = value
    document.add_paragraph("Works start in spring.")
    buffer = io.BytesIO()
    document.save(buffer)
    return write(path, buffer.getvalue())


def test_docx_paragraphs_headings_lists_and_tables_in_order(tmp_path):
    document = only(make_docx(tmp_path / "culvert.docx"))
    assert document.text == (
        "Culvert Survey\n\nThe culvert under the lane is sound.\n\nActions\n\n"
        "- clear the inlet\n- inspect the outlet\n1. order grating\n2. fit grating\n\n"
        "Item: Dredging; Cost: 400\n\nWorks start in spring."
    )
    assert heading_texts(document) == ["Culvert Survey", "Actions"]
    assert document.title == "Culvert Review"
    assert document.date == "2022-11-03"
    assert document.format == "docx"
    assert document.encoding is None


def test_docx_title_falls_back_to_first_heading(tmp_path):
    assert only(make_docx(tmp_path / "untitled.docx", title=None)).title == "Culvert Survey"


def test_docx_that_is_not_a_zip_is_named(tmp_path):
    path = write(tmp_path / "report.docx", b"plain bytes, not a zip archive")
    with pytest.raises(UnreadableFile) as caught:
        read_file(path)
    assert caught.value.reason == "not a valid DOCX file (bad zip)"


def test_zip_that_is_not_a_docx_is_named(tmp_path):
    buffer = io.BytesIO()
    with zipfile.ZipFile(buffer, "w") as archive:
        archive.writestr("readme.txt", "just a zip")
    with pytest.raises(UnreadableFile, match=r": not a valid DOCX file \("):
        read_file(write(tmp_path / "other.docx", buffer.getvalue()))


# ---------------------------------------------------------------- e-mail


def make_email(path: Path, html: bool = False) -> Path:
    message = EmailMessage()
    message["From"] = "Dana Reed <dana@example.invalid>"
    message["To"] = "ops@example.invalid"
    message["Subject"] = "Pump failure at station 4"
    message["Date"] = "Tue, 05 Mar 2024 09:30:00 +0000"
    if html:
        message.set_content("<html><body><p>Pump <b>two</b> tripped.</p><p>Crew sent.</p></body></html>", subtype="html")
    else:
        message.set_content("Pump two tripped at 06:10.\n\nA crew is on the way.\n")
        message.add_attachment(b"log", maintype="application", subtype="octet-stream", filename="log.bin")
    return write(path, message.as_bytes())


def test_email_plain_body_subject_date_and_addresses(tmp_path):
    document = only(make_email(tmp_path / "alert.eml"))
    assert document.text == "Pump two tripped at 06:10.\n\nA crew is on the way."
    assert document.title == "Pump failure at station 4"
    assert document.date == "2024-03-05"
    assert document.metadata["from"] == "Dana Reed <dana@example.invalid>"
    assert document.metadata["to"] == "ops@example.invalid"
    assert document.metadata["attachments"] == ["log.bin"]
    assert document.format == "eml"


def test_email_html_body_is_read_as_html(tmp_path):
    document = only(make_email(tmp_path / "alert.eml", html=True))
    assert document.text == "Pump two tripped.\n\nCrew sent."


def test_email_with_unknown_charset_is_decoded_from_its_bytes(tmp_path):
    raw = (
        b"From: dana@example.invalid\r\nSubject: Valve\r\nMIME-Version: 1.0\r\n"
        b"Content-Type: text/plain; charset=x-no-such-charset\r\nContent-Transfer-Encoding: 8bit\r\n\r\n"
        + "Valve r\u00e9paration done.\r\n".encode("cp1252")
    )
    document = only(write(tmp_path / "valve.eml", raw))
    assert document.text == "Valve r\u00e9paration done."
    assert document.encoding == "cp1252"


def test_file_that_is_not_an_email_is_named(tmp_path):
    with pytest.raises(UnreadableFile, match=r": not an e-mail message \(no From, To, Subject or Date header\)$"):
        read_file(write(tmp_path / "note.eml", "just some words\nwithout headers\n"))


# ---------------------------------------------------------------- json / jsonl


def test_json_list_gives_one_document_per_record(tmp_path):
    records = [
        {"id": "r-1", "title": "Gate", "date": "2020-01-31", "text": "The gate sticks.", "summary": "Gate sticks.", "site": "A"},
        {"text": "The fence leans."},
    ]
    path = write(tmp_path / "items.json", json.dumps(records))
    first, second = read_file(path)
    assert first.record_key == f"{path}#r-1"
    assert second.record_key == f"{path}#@2"
    assert first.path == second.path == str(path)
    assert (first.text, first.title, first.date) == ("The gate sticks.", "Gate", "2020-01-31")
    assert first.metadata == {"site": "A"}
    canonical = json.dumps(records[0], sort_keys=True, ensure_ascii=False, separators=(",", ":")).encode("utf-8")
    assert first.sha256 == hashlib.sha256(canonical).hexdigest()
    assert first.size == len(canonical)
    assert second.title == "items #2"
    assert first.format == "json"


def test_record_fields_are_configurable(tmp_path):
    path = write(tmp_path / "one.json", json.dumps({"body": "Lights are out.", "headline": "Lights", "key": 7}))
    fields = RecordFields(text="body", title="headline", id="key")
    document = only(path, fields=fields)
    assert (document.text, document.title, document.record_key) == ("Lights are out.", "Lights", f"{path}#7")


def test_jsonl_bad_lines_do_not_lose_good_records(tmp_path):
    path = write(
        tmp_path / "log.jsonl",
        '{"text": "First entry."}\n\n{"title": "no text"}\nnot json\n{"text": "Fifth entry."}\n',
    )
    items = list(iter_archive([path]))
    assert [type(item).__name__ for item in items] == ["Document", "IngestProblem", "IngestProblem", "Document"]
    assert items[0].record_key == f"{path}#@1"
    assert items[3].record_key == f"{path}#@5"
    assert items[1] == IngestProblem(f"{path}#line 3", "no 'text' field", "error")
    assert items[2].path == f"{path}#line 4"
    assert items[2].reason.startswith("invalid JSON: ")
    with pytest.raises(UnreadableFile) as caught:
        read_file(path)
    assert caught.value.reason == "line 3: no 'text' field (and 1 more)"


def test_json_record_without_text_is_named(tmp_path):
    path = write(tmp_path / "set.json", json.dumps([{"text": "Good."}, {"text": "Fine."}, {"title": "bad"}]))
    with pytest.raises(UnreadableFile) as caught:
        read_file(path)
    assert caught.value.reason == "record 3: no 'text' field"
    items = list(iter_archive([path]))
    assert [item.record_key for item in items[:2]] == [f"{path}#@1", f"{path}#@2"]
    assert items[2] == IngestProblem(f"{path}#3", "no 'text' field", "error")


def test_malformed_json_is_named_with_line(tmp_path):
    path = write(tmp_path / "broken.json", '[\n  {"text": "ok"},\n  {"text": }\n]')
    with pytest.raises(UnreadableFile) as caught:
        read_file(path)
    assert caught.value.reason == "invalid JSON: Expecting value (line 3)"


# ---------------------------------------------------------------- decoding and bad text


def test_cp1252_text_is_decoded_and_recorded(tmp_path):
    document = only(write(tmp_path / "old.txt", "Caf\u00e9 cr\u00e8me \u2013 \u201cquoted\u201d".encode("cp1252")))
    assert document.text == "Caf\u00e9 cr\u00e8me \u2013 \u201cquoted\u201d"
    assert document.encoding == "cp1252"


def test_cyrillic_code_page_is_not_misread_as_cp1252(tmp_path):
    words = "\u041e\u043f\u043e\u0440\u044b \u043c\u043e\u0441\u0442\u0430 \u0432 \u0445\u043e\u0440\u043e\u0448\u0435\u043c \u0441\u043e\u0441\u0442\u043e\u044f\u043d\u0438\u0438, \u043d\u043e \u043f\u043e\u043a\u0440\u044b\u0442\u0438\u0435 \u0442\u0440\u0435\u0431\u0443\u0435\u0442 \u0440\u0435\u043c\u043e\u043d\u0442\u0430."
    document = only(write(tmp_path / "most.txt", words.encode("cp1251")))
    assert document.text == words
    assert document.encoding == "cp1251"


@pytest.mark.parametrize(
    ("encoded", "encoding"),
    [
        ("\ufeffSluice gate \u00fcber alles.".encode("utf-16-le"), "utf-16"),
        ("\ufeffSluice gate \u00fcber alles.".encode("utf-16-be"), "utf-16"),
        ("Sluice gate \u00fcber alles.".encode("utf-16-le"), "utf-16-le"),
        ("\ufeffSluice gate \u00fcber alles.".encode("utf-8"), "utf-8-sig"),
        ("\ufeffSluice gate \u00fcber alles.".encode("utf-32-le"), "utf-32"),
    ],
    ids=["utf-16-le-bom", "utf-16-be-bom", "utf-16-le-no-bom", "utf-8-bom", "utf-32-le-bom"],
)
def test_unicode_encodings_are_detected(tmp_path, encoded, encoding):
    document = only(write(tmp_path / "gate.txt", encoded))
    assert document.text == "Sluice gate \u00fcber alles."
    assert document.encoding == encoding


@pytest.mark.parametrize("content", [b"", b"  \n\t\r\n  "], ids=["zero-bytes", "whitespace"])
def test_empty_file_is_named(tmp_path, content):
    path = write(tmp_path / "blank.txt", content)
    with pytest.raises(UnreadableFile) as caught:
        read_file(path)
    assert str(caught.value) == f"{path}: empty file"


@pytest.mark.parametrize(
    "content",
    [b"GIF89a\x01\x00\x00\x00\x07\x00text", bytes(range(1, 32)) * 4 + b"abc"],
    ids=["nul-bytes", "control-characters"],
)
def test_binary_content_in_text_file_is_named(tmp_path, content):
    with pytest.raises(UnreadableFile, match=r": binary content, not text$"):
        read_file(write(tmp_path / "image.txt", content))


def test_identical_content_under_two_names_has_equal_hash(tmp_path):
    content = b"Same words in two files.\n"
    first = only(write(tmp_path / "a.txt", content))
    second = only(write(tmp_path / "copy" / "b.txt", content))
    assert first.sha256 == second.sha256 == hashlib.sha256(content).hexdigest()
    assert first.size == len(content)
    assert first.record_key != second.record_key


# ---------------------------------------------------------------- archive walking


def test_iter_archive_walks_sorted_skips_hidden_and_sidecars(tmp_path):
    write(tmp_path / "b.txt", "Bee text.")
    write(tmp_path / "a.txt", "Ay text.")
    write(tmp_path / "a.summary.txt", "Summary of ay.")
    write(tmp_path / "sub" / "c.md", "Sea text.")
    write(tmp_path / "sub" / "z.csv", "x,y")
    write(tmp_path / ".cache" / "d.txt", "Hidden.")
    write(tmp_path / ".e.txt", "Hidden too.")
    write(tmp_path / "stray.summary.md", "No partner.")
    write(tmp_path / "c.txt", "")
    items = list(iter_archive([tmp_path, tmp_path / "missing"]))
    described = [
        (item.record_key, "doc") if isinstance(item, Document) else (item.path, item.kind) for item in items
    ]
    assert described == [
        (str(tmp_path / "a.txt"), "doc"),
        (str(tmp_path / "b.txt"), "doc"),
        (str(tmp_path / "c.txt"), "error"),
        (str(tmp_path / "stray.summary.md"), "skipped"),
        (str(tmp_path / "sub" / "c.md"), "doc"),
        (str(tmp_path / "sub" / "z.csv"), "skipped"),
        (str(tmp_path / "missing"), "error"),
    ]
    assert items[0].reference_summary == "Summary of ay."
    assert items[-1].reason.startswith("no such file or directory")
    assert items[5].reason == "unsupported file type '.csv'"
    assert list(iter_archive([tmp_path])) == items[:-1]


def test_iter_archive_turns_unexpected_parser_errors_into_one_line_problems(tmp_path, monkeypatch):
    def failing_reader(raw: bytes):
        raise RuntimeError("parser lost its way\nsecond line of detail")

    monkeypatch.setitem(ingest._FILE_READERS, "html", failing_reader)
    write(tmp_path / "a.html", "<p>x</p>")
    write(tmp_path / "b.txt", "Still read.")
    problem, document = list(iter_archive([tmp_path]))
    assert problem == IngestProblem(
        str(tmp_path / "a.html"), "could not read HTML file (RuntimeError: parser lost its way)", "error"
    )
    assert document.text == "Still read."


def test_read_file_names_unsupported_types_and_folders(tmp_path):
    with pytest.raises(UnreadableFile, match=r"unsupported file type '\.xlsx'$"):
        read_file(write(tmp_path / "sheet.xlsx", b"PK"))
    with pytest.raises(UnreadableFile, match=r": is a directory$"):
        read_file(tmp_path)


def test_supported_suffixes_cover_every_format():
    assert {".txt", ".md", ".rst", ".html", ".htm", ".pdf", ".docx", ".eml", ".json", ".jsonl"} <= ingest.SUPPORTED_SUFFIXES


def test_record_keys_do_not_depend_on_how_the_path_is_typed(tmp_path, monkeypatch):
    folder = tmp_path / "archive"
    folder.mkdir()
    (folder / "note.txt").write_text("The north gate was repaired on 2 May. It now closes fully.\n", encoding="utf-8")
    monkeypatch.chdir(tmp_path)
    relative = [item.record_key for item in iter_archive(["archive"])]
    absolute = [item.record_key for item in iter_archive([str(folder)])]
    assert relative == absolute == [str(folder / "note.txt")]
