"""The compact bookkeeping of a run: a bitmap of document ids, path hashes and pending
summaries behave as a Python set or dict of sets,
and a file sent out to be read counts as unread until it comes back (common practice;
no outside source: Python's own set is the reference)."""

from __future__ import annotations

import random

from store.id_sets import IdSet
from summarize.reading.path_hashes import PathHashes
from summarize.runs.pending import PendingSummaries
from summarize.runs.remaining import ReadingTracker


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


def test_path_hashes_answer_as_a_python_set_across_merges():
    rng = random.Random(11)
    added = [f"/archive/batch_{rng.randrange(50):04d}/report_{rng.randrange(10**6):06d}.txt" for _ in range(3_000)]
    hashes = PathHashes(merge_every=256)  # small, so that most paths go through a merge
    for path in added:
        hashes.add(path)
    probes = set(added) | {f"/archive/other_{i}.txt" for i in range(2_000)}
    assert {p for p in probes if p in hashes} == set(added)
    hashes.add(added[0])  # again, after it was merged: merging keeps one copy
    hashes._merge()
    assert len(hashes._sorted) == len(set(added))


def test_pending_summaries_follow_a_dict_of_sets():
    rng = random.Random(5)
    methods = ("lead", "tfidf", "textrank", "house-style")
    reference = {
        document_id: frozenset(m for m in methods if rng.random() < 0.6)
        for document_id in rng.sample(range(1, 100_000), 2_000)
    }
    pending = PendingSummaries(reference.items())
    reference = {d: names for d, names in reference.items() if names}
    assert len(pending) == len(reference) and list(pending) == sorted(reference)
    for step in range(6_000):
        document_id = rng.choice(list(reference)) if reference and step % 3 else rng.randrange(200_000)
        done = {rng.choice(methods)}
        assert pending.names(document_id) == reference.get(document_id, frozenset())
        emptied = pending.finish(document_id, done)
        if document_id in reference:
            left = reference[document_id] - done
            assert emptied == (not left)
            if left:
                reference[document_id] = left
            else:
                del reference[document_id]
        else:
            assert not emptied
        assert len(pending) == len(reference)
    for name in methods:
        assert pending.wanting(name) == sorted(d for d, names in reference.items() if name in names)
    assert list(pending) == sorted(reference)
