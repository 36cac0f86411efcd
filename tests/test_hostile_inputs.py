"""Hostile and damaged archive entries: none stops, hangs or misleads a run.

Each kind of input is generated here, put beside a small archive that is already
stored, and run through `summarize run` in a forked child with a memory ceiling and
a time limit (tests/forked_cli.py). Every case asserts: exactly one error line,
naming the entry and the problem; exit status 3 (finished, some files failed); a
good file that sorts after the hostile one stored; and every row stored before the
run unchanged.

The expected problems are this program's own rules (common practice for batch
tools: report, skip, go on); the limits are those of summarize/reading/limits.py.
"""

from __future__ import annotations

import email.mime.multipart
import email.mime.text
import io
import os
import shutil
import socket
import sqlite3
import stat
import zipfile
from collections.abc import Callable
from pathlib import Path

import docx
import pytest
from forked_cli import run_cli
from pypdf import PdfWriter

GOOD_TEXTS = {
    "alpha.txt": "The north reservoir was inspected in March. Two valves were replaced. Water quality stayed within limits.",
    "beta.md": "# Tram depot\n\nThe depot roof was repaired in April. Work finished on time. The budget held.",
    "gamma.txt": "Line 4 trams ran late in May. A signal fault was found. Engineers fixed it within a day.",
}
AFTER = ("zz_after.txt", "Pumping station six was serviced in June. Filters were changed. Output returned to normal.")


def _docx_bytes(paragraphs_xml: str) -> bytes:
    """A real DOCX (made by python-docx) whose body is replaced by ``paragraphs_xml``."""
    buffer = io.BytesIO()
    document = docx.Document()
    document.add_paragraph("Placeholder.")
    document.save(buffer)
    source = zipfile.ZipFile(io.BytesIO(buffer.getvalue()))
    out = io.BytesIO()
    with zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED) as target:
        for item in source.infolist():
            data = source.read(item.filename)
            if item.filename == "word/document.xml":
                text = data.decode("utf-8")
                start = text.index("<w:body>") + len("<w:body>")
                data = (text[:start] + paragraphs_xml + text[start:]).encode("utf-8")
            target.writestr(item.filename, data)
    return out.getvalue()


def _pdf_pages(count: int) -> bytes:
    writer = PdfWriter()
    for _ in range(count):
        writer.add_blank_page(width=200, height=200)
    out = io.BytesIO()
    writer.write(out)
    return out.getvalue()


def _mail(parts: int, body: str = "The meeting moved to Friday. Minutes follow.") -> bytes:
    message = email.mime.multipart.MIMEMultipart()
    message["From"] = "ops@example.invalid"
    message["Subject"] = "Weekly notes"
    for _ in range(parts):
        message.attach(email.mime.text.MIMEText(body))
    return message.as_bytes()


def _alias_bomb() -> str:
    """The classic nested-alias ('billion laughs') shape: nine levels of nine aliases."""
    lines = ['a: &a ["lol","lol","lol","lol","lol","lol","lol","lol","lol"]']
    names = "abcdefghi"
    for previous, name in zip(names, names[1:], strict=False):
        lines.append(f"{name}: &{name} [{', '.join('*' + previous for _ in range(9))}]")
    return "---\n" + "\n".join(lines) + "\n---\n\nBody text. It has sentences.\n"


def _write(path: Path, content: str | bytes) -> None:
    path.write_bytes(content.encode("utf-8") if isinstance(content, str) else content)


# (case id, how to make it in the archive, extra flags, entry named, problem named)
Maker = Callable[[Path], None]
CASES: list[tuple[str, Maker, list[str], str, str]] = [
    ("non-utf8-name", lambda a: _write(Path(os.fsdecode(bytes(a) + b"/m_\xe9.txt")), b""), [], "m_\\xe9.txt", "empty file"),
    ("newline-in-name", lambda a: _write(a / "new\nline.txt", b""), [], "new\\nline.txt", "empty file"),
    ("escape-in-name", lambda a: _write(a / "\x1b[31mred.txt", b""), [], "\\x1b[31mred.txt", "empty file"),
    ("line-separator-in-name", lambda a: _write(a / "para\u2028graph.txt", b""), [], "para\\u2028graph.txt", "empty file"),
    ("link-to-itself", lambda a: os.symlink("loop.txt", a / "loop.txt"), [], "loop.txt", "symbolic link loop"),
    ("two-link-loop", lambda a: (os.symlink(".pong", a / "ping.txt"), os.symlink("ping.txt", a / ".pong")), [],
     "ping.txt", "symbolic link loop"),
    ("broken-link", lambda a: os.symlink("nowhere.txt", a / "broken.txt"), [], "broken.txt", "broken symbolic link"),
    ("link-to-etc-passwd", lambda a: os.symlink("/etc/passwd", a / "passwd.txt"), [], "passwd.txt", "outside the archive"),
    ("link-to-folder-outside", lambda a: os.symlink("/etc", a / "etc"), [], "/etc", "outside the archive"),
    ("link-to-dev-zero", lambda a: os.symlink("/dev/zero", a / "zero.txt"), [], "zero.txt", "outside the archive"),
    ("link-to-dev-zero-allowed", lambda a: os.symlink("/dev/zero", a / "zero.txt"), ["--follow-links-outside"],
     "zero.txt", "is a character device, not a regular file"),
    ("fifo", lambda a: os.mkfifo(a / "b.txt"), [], "b.txt", "is a FIFO (named pipe), not a regular file"),
    ("fifo-as-json", lambda a: os.mkfifo(a / "records.jsonl"), [], "records.jsonl", "is a FIFO"),
    ("link-to-fifo-inside", lambda a: (os.mkfifo(a / ".pipe"), os.symlink(".pipe", a / "pipe.txt")), [],
     "pipe.txt", "is a FIFO"),
    ("socket", lambda a: _bind_socket(a / "s.txt"), [], "s.txt", "is a socket, not a regular file"),
    ("character-device", lambda a: os.mknod(a / "null.txt", stat.S_IFCHR | 0o600, os.makedev(1, 3)), [],
     "null.txt", "is a character device"),
    ("sidecar-link-outside", lambda a: (_write(a / "delta.txt", "Delta report. Two lines of text here."),
                                        os.symlink("/etc/passwd", a / "delta.summary.txt")), [],
     "delta.summary.txt", "summary sidecar links outside the archive"),
    ("file-over-size-limit", lambda a: _write(a / "big.txt", "Word. " * 4000), ["--max-file-mb", "0.01"],
     "big.txt", "file size exceeds the limit of 0.01 MB (raise it with --max-file-mb)"),
    ("docx-many-empty-paragraphs", lambda a: _write(a / "bomb.docx", _docx_bytes("<w:p/>" * 5000)), ["--max-parts", "1000"],
     "bomb.docx", "DOCX paragraph count exceeds the limit of 1,000 (raise it with --max-parts)"),
    ("docx-unpacks-too-large", lambda a: _write(a / "wide.docx", _docx_bytes("<w:p><w:r><w:t>" + "a" * 300_000 + "</w:t></w:r></w:p>")),
     ["--max-unpacked-mb", "0.1"], "wide.docx", "DOCX unpacked size exceeds the limit"),
    ("pdf-too-many-pages", lambda a: _write(a / "pages.pdf", _pdf_pages(5)), ["--max-parts", "3"],
     "pages.pdf", "PDF page count exceeds the limit of 3"),
    ("mail-too-many-parts", lambda a: _write(a / "parts.eml", _mail(12)), ["--max-parts", "5"],
     "parts.eml", "e-mail MIME part count exceeds the limit of 5"),
    ("mail-body-too-large", lambda a: _write(a / "long.eml", _mail(1, "Words again. " * 20_000)), ["--max-unpacked-mb", "0.1"],
     "long.eml", "e-mail body exceeds the limit"),
    ("yaml-alias-bomb", lambda a: _write(a / "bomb.md", _alias_bomb()), [], "bomb.md",
     "front matter, aliases expanded, exceeds the limit of 10,000 (raise it with --max-yaml-nodes)"),
    ("yaml-recursive-alias", lambda a: _write(a / "self.md", "---\ntitle: &t [*t]\n---\n\nBody. Text.\n"), [],
     "self.md", "exceeds the limit"),
    ("metadata-too-large", lambda a: _write(a / "meta.md", "---\nnote: " + "x" * 70_000 + "\n---\n\nBody. Text here.\n"), [],
     "meta.md", "metadata exceeds the limit of 64 KB (raise it with --max-metadata-kb)"),
    ("jsonl-deep-nesting", lambda a: _write(a / "deep.jsonl", '{"text": "Fine record. Kept."}\n' + "[" * 100_000 + "\n"), [],
     "deep.jsonl#line 2", "nested too deeply"),
    ("jsonl-huge-integer", lambda a: _write(a / "digits.jsonl", '{"text": "Fine record. Kept."}\n{"n": ' + "9" * 5000 + "}\n"), [],
     "digits.jsonl#line 2", "an integer too long to read"),
    ("json-deep-nesting", lambda a: _write(a / "deep.json", "[" * 100_000), [], "deep.json", "nested too deeply"),
    ("json-float-id", lambda a: _write(a / "f.json", '[{"id": 1.5, "text": "A. B."}, {"id": "2", "text": "C. D."}]'), [],
     "f.json#1", "'id' field is a number with a fraction or exponent"),
    ("json-bool-id", lambda a: _write(a / "b.json", '[{"id": true, "text": "A. B."}, {"text": "C. D."}]'), [],
     "b.json#1", "'id' field is a boolean"),
    ("json-object-id", lambda a: _write(a / "o.json", '[{"id": {"x": 1}, "text": "A. B."}, {"text": "C. D."}]'), [],
     "o.json#1", "'id' field is an object"),
    ("json-duplicate-id", lambda a: _write(a / "d.json", '[{"id": "x", "text": "A. B."}, {"id": "x", "text": "C. D."}]'), [],
     "d.json#2", "its id 'x' is already used"),
    ("json-at-id", lambda a: _write(a / "at.json", '[{"id": "@2", "text": "A. B."}, {"text": "C. D."}]'), [],
     "at.json#1", "starts with '@'"),
    ("json-not-object", lambda a: _write(a / "n.json", '[42, {"text": "C. D."}]'), [], "n.json#1",
     "record is not a JSON object"),
    ("jsonl-invalid-line", lambda a: _write(a / "bad.jsonl", '{"text": "Fine. Kept."}\n{"text": \n'), [],
     "bad.jsonl#line 2", "invalid JSON"),
    ("random-bytes-pdf", lambda a: _write(a / "noise.pdf", os.urandom(2048)), [], "noise.pdf", "PDF"),
    ("truncated-pdf", lambda a: _write(a / "cut.pdf", _pdf_pages(2)[:300]), [], "cut.pdf", "PDF"),
    ("docx-not-a-zip", lambda a: _write(a / "fake.docx", b"PK\x03\x04 not really a zip"), [], "fake.docx", "not a valid DOCX"),
    ("empty-mail", lambda a: _write(a / "empty.eml", b""), [], "empty.eml", "empty file"),
    ("time-limit", lambda a: _write(a / "slow.md", "- item text\n" * 200_000), ["--document-seconds", "0.05"],
     "slow.md", "took longer than the limit of 0.05 s per document (raise it with --document-seconds)"),
]


def _bind_socket(path: Path) -> None:
    server = socket.socket(socket.AF_UNIX)
    server.bind(str(path))
    server.close()


def snapshot(db: Path) -> dict:
    """Every stored document and summary row, by id."""
    with sqlite3.connect(f"file:{db}?mode=ro", uri=True) as connection:
        documents = {row[0]: row for row in connection.execute(
            "select id, record_key, sha256, status, text, title, metadata from documents")}
        summaries = {row[0]: row for row in connection.execute("select id, document_id, method, text from summaries")}
    return {"documents": documents, "summaries": summaries}


@pytest.fixture(scope="module")
def stored_template(tmp_path_factory) -> tuple[Path, Path]:
    """A small archive and the store of one clean run over it."""
    root = tmp_path_factory.mktemp("template")
    archive = root / "archive"
    archive.mkdir()
    for name, text in GOOD_TEXTS.items():
        _write(archive / name, text)
    db = root / "store.sqlite"
    result = run_cli(["run", str(archive), "--db", str(db), "--quiet"])
    assert result.exit_status == 0, result.stderr
    return archive, db


@pytest.fixture
def stored(stored_template, tmp_path) -> tuple[Path, Path]:
    """A copy of the template, at the same archive path (record keys are absolute)."""
    archive, db = stored_template
    copy = tmp_path / "store.sqlite"
    for suffix in ("", "-wal"):
        if Path(f"{db}{suffix}").exists():
            shutil.copy(f"{db}{suffix}", f"{copy}{suffix}")
    return archive, copy


@pytest.mark.parametrize(("maker", "flags", "entry", "problem"), [case[1:] for case in CASES], ids=[case[0] for case in CASES])
def test_hostile_entry_costs_one_line_and_nothing_else(stored, maker, flags, entry, problem):
    archive, db = stored
    before = snapshot(db)
    case = db.parent / "incoming"
    case.mkdir()
    try:
        try:
            maker(case)
        except PermissionError:
            pytest.skip("this platform does not let the test create that kind of entry (not root)")
        _write(case / AFTER[0], AFTER[1])
        result = run_cli(["run", str(archive), str(case), "--db", str(db), "--quiet", *flags])
    finally:
        shutil.rmtree(case, ignore_errors=True)

    assert result.exit_status == 3, result.stderr
    assert len(result.error_lines) == 1, result.stderr
    assert len(result.stderr.splitlines()) == 1, result.stderr
    [line] = result.error_lines
    assert entry in line and problem in line, line
    assert "\x1b" not in result.stderr and "\u2028" not in result.stderr
    assert "Traceback" not in result.stderr
    assert result.seconds < 15
    after = snapshot(db)
    for table, rows in before.items():
        for row_id, row in rows.items():
            assert after[table][row_id] == row
    with sqlite3.connect(db) as connection:
        stored_keys = {row[0] for row in connection.execute("select record_key from documents where status = 'active'")}
        problems = [row[0] for row in connection.execute("select reason from ingest_problems where kind = 'error'")]
    assert str(case / AFTER[0]) in stored_keys
    assert any(problem.split(" (raise")[0] in reason for reason in problems)


def test_there_are_at_least_forty_kinds():
    assert len({case[0] for case in CASES}) >= 40
