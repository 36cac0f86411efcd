#!/usr/bin/env python3
"""Regenerate the binary and specially-encoded files of the demo archive.

Usage:
    python scripts/build_demo_files.py demo_archive

Sources live next to this script in ``demo_sources/``:

* ``documents/*.src`` -- one file per PDF or DOCX report.  A header of
  ``key: value`` lines (output, title, date, author, reference, summary)
  is followed by a line ``===`` and a small markup body:
  ``# `` title heading, ``## `` / ``### `` section headings, ``- `` bullet
  items, ``1) `` numbered items, ``| a | b |`` table rows, and blank-line
  separated paragraphs.
* ``text/*.src`` -- plain-text reports that must be written in a legacy
  encoding (``encoding: cp1252`` or ``encoding: utf-16``).  The body is
  copied verbatim after the ``===`` line.

When a header carries ``summary:``, a UTF-8 sidecar ``NAME.summary.txt``
is written next to the output; header keys ``cause:``, ``actions:`` and
``open items:`` add aspect-labelled lines (``Cause: ...``) after it.  The awkward files (empty, binary, image
only PDF, malformed JSON, non-zip DOCX) are generated as well.

Everything is deterministic: fixed seeds, fixed creation dates, fixed
zip timestamps, so re-running the script reproduces identical bytes.
"""
from __future__ import annotations

import datetime as _dt
import io
import random
import re
import sys
import zipfile
from pathlib import Path

from docx import Document
from docx.shared import Pt
from fpdf import FPDF

SOURCES = Path(__file__).resolve().parent / "demo_sources"
ORG = "Fennick Vale Utilities"
FIXED_ZIP_TIME = (2026, 3, 1, 0, 0, 0)

# Core PDF fonts only cover latin-1; map the typographic characters used in
# the sources onto plain equivalents.
_PDF_MAP = str.maketrans({
    "\u2018": "'", "\u2019": "'", "\u201c": '"', "\u201d": '"',
    "\u2013": "-", "\u2014": "-", "\u2026": "...", "\u2212": "-",
    "\u00a0": " ", "\u2022": "-",
})


# --------------------------------------------------------------------------
# source parsing
# --------------------------------------------------------------------------
def read_source(path: Path, required=("output", "title", "date")) -> tuple[dict, str]:
    raw = path.read_text(encoding="utf-8")
    head, sep, body = raw.partition("\n===\n")
    if not sep:
        raise SystemExit(f"{path.name}: missing '===' separator")
    meta: dict[str, str] = {}
    for line in head.splitlines():
        if not line.strip():
            continue
        key, _, value = line.partition(":")
        meta[key.strip()] = value.strip()
    for key in required:
        if key not in meta:
            raise SystemExit(f"{path.name}: header lacks '{key}'")
    return meta, body


def parse_blocks(body: str) -> list[tuple[str, object]]:
    """Turn the markup body into (kind, payload) blocks."""
    blocks: list[tuple[str, object]] = []
    para: list[str] = []
    table: list[list[str]] = []

    def flush() -> None:
        if para:
            blocks.append(("p", " ".join(s.strip() for s in para)))
            para.clear()
        if table:
            blocks.append(("table", [row[:] for row in table]))
            table.clear()

    for line in body.splitlines():
        s = line.rstrip()
        if not s.strip():
            flush()
            continue
        if s.startswith("|"):
            if para:
                flush()
            cells = [c.strip() for c in s.strip().strip("|").split("|")]
            if all(re.fullmatch(r":?-{2,}:?", c) for c in cells):
                continue
            table.append(cells)
            continue
        if table:
            flush()
        m = re.match(r"^(#{1,3}) (.+)$", s)
        if m:
            flush()
            blocks.append((f"h{len(m.group(1))}", m.group(2).strip()))
            continue
        if s.startswith("- "):
            flush()
            blocks.append(("bullet", s[2:].strip()))
            continue
        m = re.match(r"^(\d+)\) (.+)$", s)
        if m:
            flush()
            blocks.append(("number", (m.group(1), m.group(2).strip())))
            continue
        if blocks and blocks[-1][0] in ("bullet", "number") and not para and line.startswith("  "):
            kind, payload = blocks[-1]
            if kind == "bullet":
                blocks[-1] = (kind, f"{payload} {s.strip()}")
            else:
                blocks[-1] = (kind, (payload[0], f"{payload[1]} {s.strip()}"))
            continue
        para.append(s)
    flush()
    return blocks


def fixed_datetime(meta: dict) -> _dt.datetime:
    d = _dt.date.fromisoformat(meta["date"])
    return _dt.datetime(d.year, d.month, d.day, 9, 0, 0, tzinfo=_dt.UTC)


# --------------------------------------------------------------------------
# PDF
# --------------------------------------------------------------------------
class ReportPDF(FPDF):
    def __init__(self, reference: str):
        super().__init__(format="A4")
        self.reference = reference

    def header(self) -> None:
        self.set_font("Helvetica", "", 8)
        self.set_text_color(110, 110, 110)
        self.cell(0, 5, f"{ORG} - {self.reference}", align="R",
                  new_x="LMARGIN", new_y="NEXT")
        self.ln(2)
        self.set_text_color(0, 0, 0)

    def footer(self) -> None:
        self.set_y(-14)
        self.set_font("Helvetica", "", 8)
        self.set_text_color(110, 110, 110)
        self.cell(0, 5, f"Fictional demonstration record - page {self.page_no()} of {{nb}}",
                  align="C")
        self.set_text_color(0, 0, 0)


def build_pdf(meta: dict, blocks: list, out: Path) -> None:
    t = lambda s: s.translate(_PDF_MAP)  # noqa: E731
    pdf = ReportPDF(t(meta.get("reference", meta["title"])))
    pdf.set_title(t(meta["title"]))
    pdf.set_author(t(meta.get("author", ORG)))
    pdf.set_creator(ORG)
    pdf.set_producer("demo archive builder")
    pdf.set_creation_date(fixed_datetime(meta))
    pdf.set_auto_page_break(auto=True, margin=18)
    pdf.set_margins(20, 16, 20)
    pdf.add_page()
    width = pdf.w - pdf.l_margin - pdf.r_margin
    for kind, payload in blocks:
        if kind == "h1":
            pdf.set_font("Helvetica", "B", 15)
            pdf.multi_cell(width, 7.5, t(payload), new_x="LMARGIN", new_y="NEXT")
            pdf.ln(3)
        elif kind in ("h2", "h3"):
            pdf.ln(2)
            pdf.set_font("Helvetica", "B", 12 if kind == "h2" else 10.5)
            pdf.multi_cell(width, 6, t(payload), new_x="LMARGIN", new_y="NEXT")
            pdf.ln(1)
        elif kind == "p":
            pdf.set_font("Helvetica", "", 10)
            pdf.multi_cell(width, 5, t(payload), new_x="LMARGIN", new_y="NEXT")
            pdf.ln(2.5)
        elif kind in ("bullet", "number"):
            pdf.set_font("Helvetica", "", 10)
            mark, text = ("-", payload) if kind == "bullet" else (f"{payload[0]}.", payload[1])
            pdf.set_x(pdf.l_margin + 4)
            pdf.cell(6, 5, mark)
            pdf.multi_cell(width - 10, 5, t(text), new_x="LMARGIN", new_y="NEXT")
            pdf.ln(1)
        elif kind == "table":
            pdf.set_font("Helvetica", "", 9)
            with pdf.table(first_row_as_headings=True, line_height=5,
                           text_align="LEFT") as tbl:
                for row in payload:
                    r = tbl.row()
                    for cell in row:
                        r.cell(t(cell))
            pdf.ln(3)
    out.parent.mkdir(parents=True, exist_ok=True)
    out.write_bytes(bytes(pdf.output()))


# --------------------------------------------------------------------------
# DOCX
# --------------------------------------------------------------------------
def _normalise_zip(data: bytes) -> bytes:
    """Rewrite a zip with fixed timestamps so the bytes are reproducible."""
    src = zipfile.ZipFile(io.BytesIO(data))
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", zipfile.ZIP_DEFLATED) as dst:
        for info in src.infolist():
            zi = zipfile.ZipInfo(info.filename, date_time=FIXED_ZIP_TIME)
            zi.compress_type = zipfile.ZIP_DEFLATED
            zi.external_attr = 0o644 << 16
            dst.writestr(zi, src.read(info.filename))
    return buf.getvalue()


def build_docx(meta: dict, blocks: list, out: Path) -> None:
    doc = Document()
    doc.styles["Normal"].font.size = Pt(10.5)
    cp = doc.core_properties
    when = fixed_datetime(meta).replace(tzinfo=None)
    cp.title = meta["title"]
    cp.author = meta.get("author", ORG)
    cp.last_modified_by = meta.get("author", ORG)
    cp.comments = "Fictional demonstration record."
    cp.subject = meta.get("reference", "")
    cp.created = when
    cp.modified = when
    cp.last_printed = when
    cp.revision = 1
    section = doc.sections[0]
    section.header.paragraphs[0].text = f"{ORG} - {meta.get('reference', '')}"
    section.footer.paragraphs[0].text = "Fictional demonstration record"
    for kind, payload in blocks:
        if kind == "h1":
            doc.add_heading(payload, level=1)
        elif kind == "h2":
            doc.add_heading(payload, level=2)
        elif kind == "h3":
            doc.add_heading(payload, level=3)
        elif kind == "p":
            doc.add_paragraph(payload)
        elif kind == "bullet":
            doc.add_paragraph(payload, style="List Bullet")
        elif kind == "number":
            doc.add_paragraph(payload[1], style="List Number")
        elif kind == "table":
            rows = payload
            ncols = max(len(r) for r in rows)
            tbl = doc.add_table(rows=len(rows), cols=ncols)
            tbl.style = "Table Grid"
            for i, row in enumerate(rows):
                for j, cell in enumerate(row):
                    tbl.cell(i, j).text = cell
                    if i == 0:
                        for run in tbl.cell(i, j).paragraphs[0].runs:
                            run.bold = True
    buf = io.BytesIO()
    doc.save(buf)
    out.parent.mkdir(parents=True, exist_ok=True)
    out.write_bytes(_normalise_zip(buf.getvalue()))


# --------------------------------------------------------------------------
# encoded text and awkward files
# --------------------------------------------------------------------------
def build_text(meta: dict, body: str, out: Path) -> None:
    encoding = meta.get("encoding", "utf-8").lower()
    text = body.lstrip("\n")
    if encoding == "utf-16":
        data = text.replace("\n", "\r\n").encode("utf-16")  # BOM + LE
    else:
        data = text.encode(encoding)
    out.parent.mkdir(parents=True, exist_ok=True)
    out.write_bytes(data)


ASPECT_LABELS = ("Cause", "Actions", "Open items")


def write_sidecar(meta: dict, out: Path) -> None:
    summary = meta.get("summary")
    if summary:
        lines = [summary] + [f"{label}: {meta[label.lower()]}" for label in ASPECT_LABELS if meta.get(label.lower())]
        side = out.with_name(out.stem + ".summary.txt")
        side.write_text("\n".join(lines) + "\n", encoding="utf-8")


def build_awkward(root: Path) -> list[Path]:
    aw = root / "awkward"
    aw.mkdir(parents=True, exist_ok=True)
    made = []

    empty = aw / "empty_notes.txt"
    empty.write_bytes(b"")
    made.append(empty)

    rng = random.Random(20250814)
    blob = bytearray(rng.getrandbits(8) for _ in range(2048))
    for pos in range(0, 2048, 61):  # make sure NUL bytes are present
        blob[pos] = 0
    blob[:4] = b"\x00\x01TL"
    tele = aw / "pump_telemetry.txt"
    tele.write_bytes(bytes(blob))
    made.append(tele)

    made.append(_scanned_pdf(aw / "scanned_permit.pdf"))

    broken = aw / "broken_export.json"
    broken.write_text(
        '[\n  {"id": "CN-2025-118", "title": "Valve chamber VC-212 condition note",\n'
        '   "date": "2025-06-03", "text": "Chamber lid cracked across the hinge side;\n'
        '   temporary plate fitted, "summary": "Lid cracked, plate fitted."},\n'
        '  {"id": "CN-2025-119", "title": "Hydrant H-4471 flow test",\n'
        '   "date": "2025-06-04", "text": "Flow 11.2 l/s at 2.1 bar residual",\n',
        encoding="utf-8")
    made.append(broken)

    corrupt = aw / "corrupt_handover.docx"
    corrupt.write_bytes(
        b"HANDOVER - NIGHT SHIFT 14/15 MARCH 2025\r\n"
        b"PS4 running duty/assist, P4-1 on standby. Marlpit Lane level 71%.\r\n"
        b"(saved from the control room terminal as plain text, renamed .docx)\r\n")
    made.append(corrupt)
    return made


def _scanned_pdf(out: Path) -> Path:
    """A one-page 'scan': a generated raster image and drawn boxes, no text."""
    from PIL import Image, ImageDraw

    rng = random.Random(4471)
    img = Image.new("L", (620, 860), 236)
    draw = ImageDraw.Draw(img)
    for _ in range(9000):  # paper speckle
        x, y = rng.randrange(620), rng.randrange(860)
        draw.point((x, y), fill=rng.randrange(190, 236))
    y = 90
    while y < 780:  # rows of dark bars that look like typed lines
        x = 60
        while x < 560:
            w = rng.randrange(18, 70)
            draw.rectangle((x, y, min(x + w, 560), y + 9), fill=rng.randrange(40, 90))
            x += w + rng.randrange(6, 14)
        y += rng.choice((22, 22, 22, 40))
    draw.rectangle((380, 760, 560, 820), outline=60, width=3)  # stamp box
    buf = io.BytesIO()
    img.save(buf, format="PNG", optimize=False)
    buf.seek(0)

    pdf = FPDF(format="A4")
    pdf.set_creation_date(_dt.datetime(2025, 3, 14, 9, 0, 0, tzinfo=_dt.UTC))
    pdf.set_producer("demo archive builder")
    pdf.add_page()
    pdf.image(buf, x=10, y=10, w=190)
    pdf.set_draw_color(90, 90, 90)
    pdf.set_line_width(0.6)
    pdf.rect(8, 8, 194, 281)
    pdf.line(20, 40, 190, 40)
    out.write_bytes(bytes(pdf.output()))
    return out


# --------------------------------------------------------------------------
def main(argv: list[str]) -> int:
    if len(argv) != 2:
        print(__doc__.strip().splitlines()[2].strip(), file=sys.stderr)
        return 2
    root = Path(argv[1])
    if not root.is_dir():
        print(f"not a directory: {root}", file=sys.stderr)
        return 2
    count = 0
    for src in sorted((SOURCES / "documents").glob("*.src")):
        meta, body = read_source(src)
        out = root / meta["output"]
        blocks = parse_blocks(body)
        if out.suffix == ".pdf":
            build_pdf(meta, blocks, out)
        elif out.suffix == ".docx":
            build_docx(meta, blocks, out)
        else:
            raise SystemExit(f"{src.name}: unsupported output type {out.suffix}")
        write_sidecar(meta, out)
        count += 1
    for src in sorted((SOURCES / "text").glob("*.src")):
        meta, body = read_source(src, required=("output", "encoding"))
        out = root / meta["output"]
        build_text(meta, body, out)
        write_sidecar(meta, out)
        count += 1
    count += len(build_awkward(root))
    print(f"wrote {count} files under {root}")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
