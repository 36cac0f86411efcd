"""What the read limits buy: hostile files read with the default limits and with every
limit lifted, side by side in one run.

Each file is read by ``read_file`` in a forked child under a 2 GB address-space
ceiling and a 60 s timeout (so the unlimited reads end too); the table gives the wall
time, the child's peak resident memory and how the read ended.

    python -m bench.hostile_inputs
"""

from __future__ import annotations

import io
import os
import resource
import tempfile
import time
import zipfile
from pathlib import Path

from summarize.reading.ingest import ReadLimits, read_file

CEILING_BYTES = 2 * 1024**3
TIMEOUT_SECONDS = 60
UNLIMITED = ReadLimits(
    max_file_bytes=2**62, max_unpacked_bytes=2**62, max_parts=2**62, max_metadata_bytes=2**62, yaml_nodes=2**62,
    document_seconds=0,
)


def alias_bomb(folder: Path) -> Path:
    """Nine levels of nine aliases in YAML front matter (a few hundred bytes)."""
    lines = ['a: &a ["lol","lol","lol","lol","lol","lol","lol","lol","lol"]']
    for previous, name in zip("abcdefgh", "bcdefghi", strict=True):
        lines.append(f"{name}: &{name} [{','.join('*' + previous for _ in range(9))}]")
    path = folder / "bomb.md"
    path.write_text("---\n" + "\n".join(lines) + "\n---\n\nBody text. It has two sentences.\n", encoding="utf-8")
    return path


def docx_paragraph_bomb(folder: Path, paragraphs: int = 20_000_000) -> Path:
    """A DOCX whose body is millions of empty paragraphs (it compresses to a few hundred KB)."""
    import docx

    buffer = io.BytesIO()
    document = docx.Document()
    document.add_paragraph("Placeholder.")
    document.save(buffer)
    source = zipfile.ZipFile(io.BytesIO(buffer.getvalue()))
    path = folder / "paragraphs.docx"
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as target:
        for item in source.infolist():
            data = source.read(item.filename)
            if item.filename == "word/document.xml":
                text = data.decode("utf-8")
                start = text.index("<w:body>") + len("<w:body>")
                data = text[:start].encode() + b"<w:p/>" * paragraphs + text[start:].encode()
            target.writestr(item.filename, data)
    return path


def oversized_text(folder: Path, megabytes: int = 200) -> Path:
    path = folder / "huge.txt"
    line = b"The pump ran. " * 73 + b"\n"
    with open(path, "wb") as handle:
        for _ in range(megabytes * 1024 * 1024 // len(line)):
            handle.write(line)
    return path


def measure(path: Path, limits: ReadLimits) -> tuple[float, str, str]:
    """(seconds, the child's peak resident MB, outcome) of reading ``path`` in a forked
    child ('-' when the child was killed before it could say)."""
    read_end, write_end = os.pipe()
    started = time.monotonic()
    child = os.fork()
    if child == 0:  # pragma: no cover - the child
        os.close(read_end)
        resource.setrlimit(resource.RLIMIT_AS, (CEILING_BYTES, CEILING_BYTES))
        try:
            documents = read_file(path, limits=limits)
            outcome = f"read: {len(documents)} document(s), {sum(len(d.text) for d in documents):,} characters"
        except MemoryError:
            outcome = "out of memory at the 2 GB ceiling"
        except Exception as error:  # noqa: BLE001 - any refusal is the outcome being measured
            outcome = f"refused: {str(error).split(': ', 1)[-1]}"
        peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
        os.write(write_end, f"{peak:.0f}|{outcome}".encode()[:500])
        os._exit(0)
    os.close(write_end)
    status = None
    while time.monotonic() - started < TIMEOUT_SECONDS:
        pid, status = os.waitpid(child, os.WNOHANG)
        if pid:
            break
        time.sleep(0.02)
    else:
        os.kill(child, 9)
        os.waitpid(child, 0)
    seconds = time.monotonic() - started
    report = os.read(read_end, 500).decode("utf-8", "replace") or f"-|killed after {TIMEOUT_SECONDS} s"
    os.close(read_end)
    peak, outcome = report.split("|", 1)
    return seconds, peak, outcome


def main() -> None:
    with tempfile.TemporaryDirectory() as name:
        folder = Path(name)
        files = {
            "YAML alias bomb (front matter)": alias_bomb(folder),
            "DOCX, 20 million empty paragraphs": docx_paragraph_bomb(folder),
            "200 MB text file": oversized_text(folder),
        }
        print("| file | size | limits | seconds | peak memory (MB) | outcome |")
        print("|---|---|---|---|---|---|")
        for label, path in files.items():
            for setting, limits in (("defaults", ReadLimits()), ("lifted", UNLIMITED)):
                seconds, peak, outcome = measure(path, limits)
                size = f"{path.stat().st_size / 1024:,.1f} KB"
                print(f"| {label} | {size} | {setting} | {seconds:.2f} | {peak} | {outcome[:110]} |", flush=True)


if __name__ == "__main__":
    main()
