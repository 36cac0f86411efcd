"""`summarize run --scheduler`: per-document work on a real Dask cluster (a
`dask scheduler` and a `dask worker` process on 127.0.0.1, free ports, stopped
afterwards and stopping by themselves if left behind) gives the same summaries,
texts and spans, as a local run; only the client writes the store."""

from __future__ import annotations

import math
import socket
import sqlite3
import subprocess
import sys
import time

import pytest
from operations_support import (
    REPO,
    assert_store_sound,
    cli_environment,
    copy_demo_archive,
    run_cli,
    summaries,
    wait_for,
)

from summarize.runs.executors import BATCH_DOCUMENTS

pytestmark = pytest.mark.slow  # a real Dask scheduler and worker

START_TIMEOUT = 90


def _free_port() -> int:
    with socket.socket() as probe:
        probe.bind(("127.0.0.1", 0))
        return probe.getsockname()[1]


def _accepts(port: int) -> bool:
    try:
        with socket.create_connection(("127.0.0.1", port), timeout=1):
            return True
    except OSError:
        return False


def _stop(process: subprocess.Popen) -> None:
    if process.poll() is None:
        process.terminate()
        try:
            process.wait(timeout=20)
        except subprocess.TimeoutExpired:
            process.kill()
            process.wait(timeout=20)


@pytest.fixture()
def dask_cluster(tmp_path):
    """The address of a one-worker, one-thread cluster; both processes import this
    checkout (PYTHONPATH) and quit on their own when idle or orphaned."""
    port = _free_port()
    address = f"tcp://127.0.0.1:{port}"
    dask = [sys.executable, "-m", "dask"]
    env = cli_environment()
    logs = [open(tmp_path / name, "w") for name in ("scheduler.log", "worker.log")]
    processes = []
    try:
        processes.append(subprocess.Popen(
            [*dask, "scheduler", "--host", "127.0.0.1", "--port", str(port), "--dashboard-address", "127.0.0.1:0",
             "--idle-timeout", "300"],
            cwd=REPO, env=env, stdout=logs[0], stderr=subprocess.STDOUT,
        ))
        assert wait_for(lambda: _accepts(port) or processes[0].poll() is not None, START_TIMEOUT, interval=0.2)
        processes.append(subprocess.Popen(
            [*dask, "worker", address, "--host", "127.0.0.1", "--nworkers", "1", "--nthreads", "1", "--no-dashboard",
             "--death-timeout", "60"],
            cwd=REPO, env=env, stdout=logs[1], stderr=subprocess.STDOUT,
        ))
        yield address
    finally:
        for process in reversed(processes):
            _stop(process)
        for log in logs:
            log.close()


def _summarizing_tasks_on(address: str) -> int:
    """How many summarizing tasks reached memory on the cluster, by the scheduler's
    own cumulative counts per task prefix."""
    from distributed import Client

    def finished(dask_scheduler) -> int:
        prefix = dask_scheduler.task_prefixes.get("summarize_batch")
        return 0 if prefix is None else prefix.state_counts["memory"]

    with Client(address, timeout="20s") as client:
        return client.run_on_scheduler(finished)


def test_dask_cluster_gives_the_same_summaries_as_a_local_run(dask_cluster, tmp_path):
    # External check: Dask distributed (a real scheduler and worker)
    archive = copy_demo_archive(tmp_path / "demo_archive")
    local_db, cluster_db = tmp_path / "local.sqlite", tmp_path / "cluster.sqlite"
    local = run_cli("run", str(archive), "--db", str(local_db))
    started = time.monotonic()
    cluster = run_cli("run", str(archive), "--db", str(cluster_db), "--scheduler", dask_cluster, timeout=300)
    assert time.monotonic() - started < 300
    # The awkward files fail the same way in both (exit 3: some files failed).
    assert (local.returncode, cluster.returncode) == (3, 3), cluster.stderr
    expected = summaries(local_db)
    assert expected and summaries(cluster_db) == expected
    assert_store_sound(cluster_db)
    with sqlite3.connect(cluster_db) as conn:
        documents = conn.execute("select count(distinct document_id) from summaries").fetchone()[0]
    # Documents go out in batches of BATCH_DOCUMENTS, in order.
    assert _summarizing_tasks_on(dask_cluster) == math.ceil(documents / BATCH_DOCUMENTS)


def test_unreachable_scheduler_is_a_one_line_error(tmp_path):
    archive = copy_demo_archive(tmp_path / "demo_archive")
    db = tmp_path / "store.sqlite"
    result = run_cli("run", str(archive), "--db", str(db), "--scheduler", f"tcp://127.0.0.1:{_free_port()}", timeout=120)
    assert result.returncode == 1
    assert "cannot reach the Dask scheduler at tcp://127.0.0.1:" in result.stderr
    assert not db.exists()  # checked before any reading or writing
