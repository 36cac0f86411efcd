"""The compact bookkeeping of a run: a bitmap of document ids behaves as a Python set,
and a file sent out to be read counts as unread until it comes back (common practice;
no outside source: Python's own set is the reference)."""

from __future__ import annotations

import random

from summarize.runs.remaining import IdSet, ReadingTracker


def test_id_bitmap_answers_as_a_python_set():
    rng = random.Random(7)
    added = {rng.randrange(0, 200_000) for _ in range(5_000)} | {0, 7, 8, 199_999}
    bitmap = IdSet()
    for document_id in added:
        bitmap.add(document_id)
    probes = added | {rng.randrange(0, 400_000) for _ in range(20_000)}
    assert {i for i in probes if i in bitmap} == added


def test_a_file_sent_out_and_never_back_keeps_the_archive_unread():
    tracker = ReadingTracker()
    tracker.handed_out()
    tracker.handed_out()
    tracker.returned()
    tracker.starting("/a/one.txt", 2)
    tracker.done("/a/one.txt")
    tracker.walk_ended()
    assert not tracker.everything_read  # one.txt half done, the other file still out
    tracker.done("/a/one.txt")
    assert not tracker.everything_read  # the second file never came back
    assert tracker.unread(["/a/one.txt", "/a/two.txt"]) == ["/a/two.txt"]
    tracker.returned()
    tracker.starting("/a/two.txt", 1)
    tracker.done("/a/two.txt")
    assert tracker.everything_read and tracker.unread(["/a/one.txt", "/a/two.txt"]) == []
