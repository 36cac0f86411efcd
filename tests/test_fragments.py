"""Extractive fragments against hand-worked examples of the definitions in Grusky,
Naaman & Artzi (2018), "Newsroom" (NAACL), §4.1 — definitions recalled from memory:
F(A, S) is found greedily, taking at each summary position the longest run shared
with the article; coverage = Σ|f| / |S|, density = Σ|f|² / |S|, compression = |A| / |S|."""

from __future__ import annotations

import pytest

from summarize.evaluation.fragments import IndexedSource, extractive_fragments, extractiveness, tokens


def test_coverage_and_density_by_hand():
    # External check: Grusky, Naaman & Artzi (2018), fragment definitions (recalled from memory)
    # A = the cat sat on the mat today   (7 tokens)
    # S = the cat sat on a mat           (6 tokens)
    # i=0 "the": runs start at A[0] ("the cat sat on", 4) and A[4] ("the", 1) -> take 4.
    # i=4 "a": not in A -> no fragment, move on by one.
    # i=5 "mat": run "mat" (1).
    # F = {the cat sat on, mat}: coverage = (4 + 1)/6 = 5/6, density = (16 + 1)/6 = 17/6,
    # compression = 7/6. Novel unigrams: "a" = 1/6. Bigrams of S: the cat, cat sat,
    # sat on, on a, a mat -> "on a" and "a mat" are novel = 2/5.
    article = "The cat sat on the mat today."
    summary = ["The cat sat on a mat."]
    assert extractive_fragments(IndexedSource(article), tokens(summary[0])) == [["the", "cat", "sat", "on"], ["mat"]]
    found = extractiveness(article, summary)
    assert found.coverage == pytest.approx(5 / 6)
    assert found.density == pytest.approx(17 / 6)
    assert found.compression == pytest.approx(7 / 6)
    assert found.novel_unigrams == pytest.approx(1 / 6)
    assert found.novel_bigrams == pytest.approx(2 / 5)


def test_longest_run_wins_over_the_first():
    # A = a b c d a b c e, S = a b c e. At i=0 the run from A[0] is "a b c" (3) and the
    # run from A[4] is "a b c e" (4): the longer is kept, so F = {a b c e},
    # coverage = 4/4 = 1 and density = 16/4 = 4.
    found = extractiveness("a b c d. a b c e", ["a b c e"])
    assert (found.coverage, found.density) == pytest.approx((1.0, 4.0))


def test_copied_sentences_have_no_novel_ngrams_across_their_junction():
    # Two sentences copied from different places: every summary word is covered, in two
    # fragments of 3 words: coverage 1, density (9 + 9)/6 = 3. The bigram across the
    # junction ("storm gauges") is not in the source but is not counted: n-grams stay
    # inside sentences (a choice of ours, stated in summarize.evaluation.fragments).
    source = "Rain fell overnight. Staff checked the gauges. The storm passed."
    found = extractiveness(source, ["The storm passed.", "checked the gauges"])
    assert (found.coverage, found.density) == pytest.approx((1.0, 3.0))
    assert found.novel_bigrams == 0.0
