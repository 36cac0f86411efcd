"""One writer per store: a second run is refused (naming the holder) or waits; a
lock left by a killed run is taken over; the lock survives no dead holder, not even
through forked children; exactly one of many simultaneous starters wins."""

from __future__ import annotations

import json
import os
import signal
import socket
import sqlite3
import subprocess
import sys
import textwrap
import time
from pathlib import Path

import pytest
from click.testing import CliRunner
from operations_support import (
    assert_store_sound,
    cli_environment,
    generated_archive,
    start_cli,
    wait_for,
)

from store.lock import StoreLock, StoreLocked
from summarize.cli import main


def _holder_pid(db: Path) -> int | None:
    try:
        return json.loads(Path(f"{db}.lock").read_text(encoding="utf-8"))["pid"]
    except (FileNotFoundError, ValueError, KeyError):
        return None


@pytest.mark.slow
def test_second_run_is_refused_naming_the_holder_or_waits_for_it(tmp_path):
    archive = generated_archive(tmp_path / "archive", 40, seed=2)
    db = tmp_path / "store.sqlite"
    first = start_cli("run", str(archive), "--db", str(db), "--quiet")
    try:
        assert wait_for(lambda: _holder_pid(db) == first.pid, 120)
        runner = CliRunner()
        refused = runner.invoke(main, ["run", str(archive), "--db", str(db)])
        waited = runner.invoke(main, ["run", str(archive), "--db", str(db), "--wait-lock", "300", "--json"])
    finally:
        first.communicate(timeout=300)
    assert refused.exit_code == 1
    assert f"is being written by process {first.pid} on host {socket.gethostname()}, started 20" in refused.output
    assert first.returncode == 0
    assert waited.exit_code == 0, waited.output
    assert f"waiting for process {first.pid} on host {socket.gethostname()}" in waited.output
    report = json.loads(waited.stdout)
    assert (report["summaries_added"], report["summaries_skipped"]) == (0, 120)  # the first run did it all
    assert_store_sound(db)
    with sqlite3.connect(db) as conn:
        # The refused run left no trace; the waiting one ran after the first.
        assert conn.execute("select pid, status from runs order by id").fetchall()[0] == (first.pid, "completed")
        assert conn.execute("select count(*) from runs").fetchone() == (2,)


def _dead_pid() -> int:
    process = subprocess.Popen([sys.executable, "-c", "pass"])
    process.wait()
    return process.pid


@pytest.mark.slow
def test_lock_left_by_a_dead_process_is_taken_over(tmp_path):
    archive = generated_archive(tmp_path / "archive", 2, seed=4)
    db = tmp_path / "store.sqlite"
    dead = _dead_pid()
    Path(f"{db}.lock").write_text(
        json.dumps({"pid": dead, "host": socket.gethostname(), "started": "2025-01-01T00:00:00+00:00"}), encoding="utf-8"
    )
    result = CliRunner().invoke(main, ["run", str(archive), "--db", str(db)])
    assert result.exit_code == 0, result.output
    assert f"took over the lock left by process {dead} on host {socket.gethostname()}" in result.output
    assert not Path(f"{db}.lock").exists()


_HOLD_AND_FORK = textwrap.dedent(
    """
    import os, sys, time
    from store.lock import StoreLock
    StoreLock(sys.argv[1]).acquire()
    child = os.fork()
    if child == 0:
        time.sleep(60)
        os._exit(0)
    print(child, flush=True)
    time.sleep(60)
    """
)


@pytest.mark.slow
def test_a_killed_holder_frees_the_store_even_when_its_forked_child_lives_on(tmp_path):
    db = str(tmp_path / "store.sqlite")
    holder = subprocess.Popen([sys.executable, "-c", _HOLD_AND_FORK, db], env=cli_environment(),
                              stdout=subprocess.PIPE, text=True)
    child = int(holder.stdout.readline())
    try:
        with pytest.raises(StoreLocked, match=f"process {holder.pid} on host"):
            StoreLock(db).acquire()
        holder.send_signal(signal.SIGKILL)
        holder.wait(timeout=30)
        lock = StoreLock(db).acquire()  # the child still runs, holding the parent's descriptors
        assert lock.stale_holder["pid"] == holder.pid
        lock.release()
    finally:
        holder.kill()
        try:
            os.kill(child, signal.SIGKILL)
        except ProcessLookupError:
            pass


_CONTEND = textwrap.dedent(
    """
    import sys, time
    from store.lock import StoreLock, StoreLocked
    start = float(sys.argv[2])
    time.sleep(max(0.0, start - time.time()))
    try:
        StoreLock(sys.argv[1]).acquire()
    except StoreLocked:
        print("refused")
    else:
        print("won", flush=True)
        time.sleep(2)
    """
)


@pytest.mark.slow
def test_exactly_one_of_many_simultaneous_starters_gets_a_stale_lock(tmp_path):
    db = str(tmp_path / "store.sqlite")
    Path(f"{db}.lock").write_text(json.dumps({"pid": _dead_pid(), "host": socket.gethostname(), "started": None}))
    start = time.time() + 3  # every contender imported and waiting by then
    contenders = [
        subprocess.Popen([sys.executable, "-c", _CONTEND, db, str(start)], env=cli_environment(),
                         stdout=subprocess.PIPE, text=True)
        for _ in range(6)
    ]
    outcomes = sorted(process.communicate(timeout=60)[0].strip() for process in contenders)
    assert outcomes == ["refused"] * 5 + ["won"]
