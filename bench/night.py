"""A whole night, measured: the command line on generated archives of growing size.

    python -m bench.night                                # 1,000 and 10,000 documents
    python -m bench.night --sizes 1000,10000,100000      # about 30 minutes on two idle cores
    python -m bench.night --keep DIR                     # keep archives and stores in DIR

For each size, an archive is generated (``bench.archives``; one report in ten has a
reference sidecar), then the commands an analyst runs are timed as separate
processes, as cron would start them: ``summarize run --workers N``, then ``score``,
``compare``, ``report`` and one ``find``. For the run: wall time, documents per
second, CPU per document (the writing process and its workers apart), peak memory
of the whole process tree (proportional set size, so pages the workers share with
the process that forked them count once) and of the writing process, and the store's
size on disk. Sampling every 0.2 s can miss a peak shorter than that.

The last table is the cluster model: a worker costs ``worker CPU per document``, the
one writing process ``writer CPU per document`` (walking, reading, storing, handing
out work), so one writer keeps about ``worker / writer`` busy workers fed, wherever
they run.
"""

from __future__ import annotations

import argparse
import os
import resource
import subprocess
import sys
import tempfile
import threading
import time
from dataclasses import dataclass, field
from pathlib import Path

import psutil

from bench.archives import build_archive, demo_sentences
from bench.operations import DEMO_ARCHIVE, load, table

REFERENCE_EVERY = 10
SAMPLE_SECONDS = 0.2
FIND_QUERY = '"bearing" OR inspection'


@dataclass
class Measured:
    """One command, run as its own process tree."""

    seconds: float = 0.0
    cpu_total: float = 0.0
    cpu_main: float = 0.0
    peak_tree_mb: float = 0.0
    peak_main_mb: float = 0.0
    worker_cpu: dict = field(default_factory=dict)

    @property
    def cpu_workers(self) -> float:
        return max(self.cpu_total - self.cpu_main, 0.0)


def _children_cpu() -> float:
    usage = resource.getrusage(resource.RUSAGE_CHILDREN)
    return usage.ru_utime + usage.ru_stime


def measure(command: list[str]) -> Measured:
    """Run ``command``; sample its tree's memory and its main process's CPU until it ends."""
    measured = Measured()
    before = _children_cpu()
    started = time.perf_counter()
    process = subprocess.Popen(command, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True)
    main = psutil.Process(process.pid)
    done = threading.Event()

    def sample() -> None:
        while not done.is_set():
            try:
                tree = [main, *main.children(recursive=True)]
                pss, main_rss = 0, 0
                for member in tree:
                    try:
                        info = member.memory_full_info()
                    except (psutil.NoSuchProcess, psutil.AccessDenied):
                        continue
                    pss += info.pss
                    if member.pid == main.pid:
                        main_rss = info.rss
                        times = member.cpu_times()
                        measured.cpu_main = times.user + times.system
                measured.peak_tree_mb = max(measured.peak_tree_mb, pss / 2**20)
                measured.peak_main_mb = max(measured.peak_main_mb, main_rss / 2**20)
            except psutil.NoSuchProcess:
                return
            done.wait(SAMPLE_SECONDS)

    sampler = threading.Thread(target=sample, daemon=True)
    sampler.start()
    _, errors = process.communicate()
    measured.seconds = time.perf_counter() - started
    done.set()
    sampler.join()
    measured.cpu_total = _children_cpu() - before
    if process.returncode not in (0, 3):
        raise RuntimeError(f"{' '.join(command)} exited {process.returncode}: {errors.strip()[-500:]}")
    return measured


def summarize(*args: str) -> list[str]:
    return [sys.executable, "-m", "summarize", *args]


def store_megabytes(db: Path) -> float:
    return sum(part.stat().st_size for part in db.parent.glob(db.name + "*")) / 1e6


def night(workdir: Path, size: int, sentences: list[str], workers: int) -> dict:
    archive, db = workdir / f"archive_{size}", workdir / f"night_{size}.sqlite"
    if not archive.exists():
        build_archive(archive, size, sentences, seed=size, reference_every=REFERENCE_EVERY)
    for old in workdir.glob(db.name + "*"):
        old.unlink()
    results = {"size": size, "load": load()}
    results["run"] = measure(summarize("run", str(archive), "--db", str(db), "--workers", str(workers)))
    results["store_mb"] = store_megabytes(db)
    results["score"] = measure(summarize("score", "--db", str(db)))
    results["compare"] = measure(summarize("compare", "--db", str(db), "--budget", "reference"))
    results["report"] = measure(summarize("report", "--db", str(db), "--out", str(workdir / f"report_{size}.html")))
    results["find"] = measure(summarize("find", FIND_QUERY, "--db", str(db)))
    return results


def tables(nights: list[dict], workers: int) -> str:
    base = nights[0]
    base_run = base["run"]
    run_rows, command_rows, model_rows = [], [], []
    for result in nights:
        run, size = result["run"], result["size"]
        per_document = 1000 * run.seconds / size
        cpu_per_document = 1000 * run.cpu_total / size
        run_rows.append([
            f"{size:,}", f"{run.seconds:.1f}", f"{size / run.seconds:.0f}",
            f"{per_document:.2f}", f"{per_document / (1000 * base_run.seconds / base['size']):.2f}",
            f"{1000 * run.cpu_main / size:.2f} + {1000 * run.cpu_workers / size:.2f}",
            f"{cpu_per_document / (1000 * base_run.cpu_total / base['size']):.2f}",
            f"{run.peak_tree_mb:.0f}", f"{run.peak_tree_mb / base_run.peak_tree_mb:.2f}",
            f"{run.peak_main_mb:.0f}", f"{result['store_mb']:.0f}",
        ])
        command_rows.append([f"{size:,}", *(f"{result[name].seconds:.1f}" for name in ("score", "compare", "report", "find")),
                             *(f"{result[name].peak_tree_mb:.0f}" for name in ("score", "compare", "report"))])
        writer, worker = run.cpu_main / size, run.cpu_workers / size
        model_rows.append([f"{size:,}", f"{1000 * writer:.2f}", f"{1 / writer:.0f}" if writer else "–",
                           f"{1000 * worker:.2f}", f"{worker / writer:.1f}" if writer else "–"])
    out = [
        f"#### `summarize run --workers {workers}` ({nights[-1]['load']}; one report in {REFERENCE_EVERY} has a reference)\n",
        table(["documents", "seconds", "documents / s", "ms per document", "× first", "CPU ms per document: writer + workers",
               "× first", "peak memory, whole tree (MB)", "× first", "peak memory, writer (MB)", "store MB"], run_rows),
        "\n#### The commands that follow, on the same store (seconds; peak memory in MB)\n",
        table(["documents", "score", "compare", "report", "find", "score MB", "compare MB", "report MB"], command_rows),
        "\n#### Cluster model: how many workers one writer feeds\n",
        table(["documents", "writer CPU ms per document", "writer ceiling, documents / s",
               "worker CPU ms per document", "workers one writer feeds"], model_rows),
    ]
    return "\n".join(out)


def main(argv: list[str] | None = None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sizes", default="1000,10000")
    parser.add_argument("--workers", type=int, default=2)
    parser.add_argument("--keep", type=Path, help="folder for archives and stores, kept (archives are reused)")
    args = parser.parse_args(argv)
    sentences = demo_sentences(DEMO_ARCHIVE)
    with tempfile.TemporaryDirectory(prefix="bench-night-") as folder:
        workdir = args.keep or Path(folder)
        workdir.mkdir(parents=True, exist_ok=True)
        nights = []
        for size in (int(size) for size in args.sizes.split(",")):
            nights.append(night(workdir, size, sentences, args.workers))
            print(f"_{size:,} documents done ({load()})_", file=sys.stderr, flush=True)
        print(tables(nights, args.workers))
    print(f"\n_{os.cpu_count()} CPUs_")


if __name__ == "__main__":
    main()
