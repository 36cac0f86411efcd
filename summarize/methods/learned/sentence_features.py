"""Per-sentence features for a learned extractive scorer.

One row per sentence of a document, one column per entry of :data:`FEATURE_NAMES`.
The features describe where a sentence stands (in the document, its paragraph and
its section), what its section is called, how central it is (TF-IDF cosine to the
document, TextRank), how close it is to the title and headings, and what it says on
its surface (length, numbers, dates, citations, cue phrases). Rows are computed for
every sentence; the scorer decides which ones are candidates.
"""

from __future__ import annotations

import math
import re
from collections.abc import Iterable
from dataclasses import dataclass

import numpy as np
from scipy.stats import rankdata
from sklearn.feature_extraction.text import TfidfVectorizer

from store.records import Document, Segmentation
from summarize.methods.archive_idf import fit_archive_idf
from summarize.methods.budget import count_words
from summarize.methods.extractive import TextRankSummarizer
from summarize.methods.graph import pagerank

# Words that, in a section heading, say what kind of section it is. Grouped by the
# role the section usually plays in a report or paper; the lists are our own choice.
SECTION_CUES: dict[str, tuple[str, ...]] = {
    "opening": ("introduction", "overview", "background", "purpose", "scope", "motivation", "executive"),
    "closing": ("conclusion", "concluding", "summary", "closing", "final remarks", "wrap"),
    "findings": ("result", "finding", "evaluation", "experiment", "analysis", "outcome", "observation", "performance"),
    "actions": ("recommend", "future", "next step", "action", "proposal", "way forward"),
    "method": ("method", "approach", "model", "procedure", "design", "implementation", "system", "framework",
               "architecture", "algorithm"),
    "prior_work": ("related", "previous", "prior", "literature", "history"),
    "discussion": ("discussion", "limitation", "error", "issue"),
    "material": ("data", "corpus", "dataset", "material", "setup", "resource", "annotation"),
}

# Phrases that, in the sentence itself, announce its purpose.
PHRASE_CUES: dict[str, tuple[str, ...]] = {
    "self_reference": ("this paper", "this report", "this study", "this article", "this work", "this document",
                       "this memo", "this note", "in this report", "we present", "we propose", "we introduce",
                       "we describe", "here we", "this review"),
    "claim": ("we show", "results show", "we find", "we found", "found that", "shows that", "show that",
              "demonstrate", "outperform", "improve", "significant", "achiev", "state-of-the-art",
              "state of the art", "concluded", "conclude"),
    "directive": ("recommend", "should", "must", "propose that", "is required", "are required", "needs to"),
    "pointer": ("table", "figure", "fig.", "see section", "appendix", "equation", "eq."),
}

_FIRST_PERSON = re.compile(r"\b(?:we|our|us)\b", re.IGNORECASE)
_NUMBER = re.compile(r"\d")
_PERCENT = re.compile(r"\d\s*(?:%|per ?cent)", re.IGNORECASE)
_YEAR_OR_DATE = re.compile(
    r"\b(?:1[89]\d\d|20\d\d)\b|\b\d{1,2}[/.-]\d{1,2}[/.-]\d{2,4}\b|"
    r"\b(?:jan|feb|mar|apr|may|jun|jul|aug|sep|sept|oct|nov|dec)[a-z]*\.?\s+\d{1,2}\b",
    re.IGNORECASE,
)
_CITATION = re.compile(r"\[\d+(?:[,–-]\s*\d+)*\]|\([A-Z][A-Za-z-]+(?: et al\.?| and [A-Z][A-Za-z-]+)?,? \d{4}[a-z]?")
_SUBSECTION_NUMBER = re.compile(r"^\s*\d+\.\d+")

FEATURE_NAMES: tuple[str, ...] = (
    "position_relative",
    "position_log",
    "character_position_relative",
    "paragraph_relative",
    "in_paragraph_log",
    "in_paragraph_relative",
    "paragraph_first",
    "paragraph_last",
    "paragraph_sentences_log",
    "section_relative",
    "section_index",
    "in_section_log",
    "in_section_relative",
    "section_first_paragraph",
    *(f"section_{name}" for name in SECTION_CUES),
    "words_log",
    "words",
    "tfidf_centrality",
    "tfidf_centrality_rank",
    "textrank",
    "textrank_rank",
    "title_similarity",
    "heading_similarity",
    "opening_similarity",
    "has_number",
    "has_percent",
    "has_date",
    "has_citation",
    "digit_share",
    "first_person",
    *(f"phrase_{name}" for name in PHRASE_CUES),
    "list_item",
    "question",
    "document_sentences_log",
)


def _contains_any(text: str, cues: tuple[str, ...]) -> float:
    return float(any(cue in text for cue in cues))


def _rank_share(values: np.ndarray) -> np.ndarray:
    """Rank of each value within its document scaled to (0, 1]; ties share a rank."""
    if len(values) == 0:
        return values
    return rankdata(values, method="average") / len(values)


@dataclass
class SentenceFeatures:
    """Feature rows for the sentences of a document.

    ``fit(texts)`` learns the inverse document frequencies (scikit-learn's smooth
    IDF, ``ln((1 + n) / (1 + df)) + 1``, Salton & Buckley 1988) over an archive;
    ``transform(document, segmentation)`` returns an ``n_sentences × len(FEATURE_NAMES)``
    array. Centrality is the TF-IDF cosine between a sentence and its whole
    document (the centroid score of Radev et al. 2004); ``textrank`` is the
    TextRank score (Mihalcea & Tarau 2004) times the number of sentences, so that 1
    means average; ``*_rank`` columns are the same scores as within-document rank
    shares. Sections start at heading sentences; a subsection heading ("3.2 ...")
    inherits the cue words of the top-level heading above it. The opening is the first
    ``opening_sentences`` non-heading sentences.
    """

    opening_sentences: int = 5
    stop_words: str | None = "english"

    def fit(self, texts: Iterable[str]) -> SentenceFeatures:
        self.vectorizer_ = fit_archive_idf(
            TfidfVectorizer(stop_words=self.stop_words, sublinear_tf=True, smooth_idf=True, norm="l2"), texts
        )
        return self

    def transform(self, document: Document, segmentation: Segmentation) -> np.ndarray:
        if not hasattr(self, "vectorizer_"):
            raise RuntimeError("SentenceFeatures.fit must be called before transform")
        texts = segmentation.sentence_texts(document.text)
        n = len(texts)
        if n == 0:
            return np.zeros((0, len(FEATURE_NAMES)))
        lowered = [t.lower() for t in texts]
        words = np.array([count_words(t) for t in texts], dtype=float)
        headings = segmentation.sentence_is_heading
        columns: dict[str, np.ndarray] = {}

        body = [i for i in range(n) if not headings[i]]
        order = np.zeros(n)
        for rank, index in enumerate(body):
            order[index] = rank
        columns["position_relative"] = order / max(len(body) - 1, 1)
        columns["position_log"] = np.log1p(order)
        columns["character_position_relative"] = np.array(
            [span.start / max(len(document.text), 1) for span in segmentation.sentences]
        )

        paragraphs = np.array(segmentation.sentence_paragraph)
        paragraph_count = max(len(segmentation.paragraphs), 1)
        in_paragraph = np.zeros(n)
        paragraph_size: dict[int, int] = {}
        for i in range(n):
            in_paragraph[i] = paragraph_size.get(paragraphs[i], 0)
            paragraph_size[paragraphs[i]] = paragraph_size.get(paragraphs[i], 0) + 1
        sizes = np.array([paragraph_size[p] for p in paragraphs], dtype=float)
        columns["paragraph_relative"] = paragraphs / max(paragraph_count - 1, 1)
        columns["in_paragraph_log"] = np.log1p(in_paragraph)
        columns["in_paragraph_relative"] = in_paragraph / np.maximum(sizes - 1, 1)
        columns["paragraph_first"] = (in_paragraph == 0).astype(float)
        columns["paragraph_last"] = (in_paragraph == sizes - 1).astype(float)
        columns["paragraph_sentences_log"] = np.log1p(sizes)

        section, in_section, section_size, first_paragraph, cue_text = self._sections(texts, headings, paragraphs)
        section_count = max(int(section.max()) + 1, 1)
        columns["section_relative"] = section / max(section_count - 1, 1)
        columns["section_index"] = np.minimum(section, 20)
        columns["in_section_log"] = np.log1p(in_section)
        columns["in_section_relative"] = in_section / np.maximum(section_size - 1, 1)
        columns["section_first_paragraph"] = first_paragraph
        for name, cues in SECTION_CUES.items():
            columns[f"section_{name}"] = np.array([_contains_any(cue_text[i], cues) for i in range(n)])

        columns["words_log"] = np.log1p(words)
        columns["words"] = np.minimum(words, 100)

        vectors = self.vectorizer_.transform(texts)
        centrality = np.asarray((vectors @ self.vectorizer_.transform([document.text]).T).toarray()).ravel()
        columns["tfidf_centrality"] = centrality
        columns["tfidf_centrality_rank"] = _rank_share(centrality)
        graph = TextRankSummarizer().similarity_graph(texts)
        textrank = pagerank(graph) * n
        columns["textrank"] = textrank
        columns["textrank_rank"] = _rank_share(textrank)
        columns["title_similarity"] = self._similarity(vectors, document.title or "")
        heading_text = " ".join(texts[i] for i in range(n) if headings[i])
        columns["heading_similarity"] = self._similarity(vectors, heading_text)
        opening_text = " ".join(texts[i] for i in body[: self.opening_sentences])
        columns["opening_similarity"] = self._similarity(vectors, opening_text)

        columns["has_number"] = np.array([float(bool(_NUMBER.search(t))) for t in texts])
        columns["has_percent"] = np.array([float(bool(_PERCENT.search(t))) for t in texts])
        columns["has_date"] = np.array([float(bool(_YEAR_OR_DATE.search(t))) for t in texts])
        columns["has_citation"] = np.array([float(bool(_CITATION.search(t))) for t in texts])
        columns["digit_share"] = np.array([sum(c.isdigit() for c in t) / max(len(t), 1) for t in texts])
        columns["first_person"] = np.array([len(_FIRST_PERSON.findall(t)) for t in texts], dtype=float)
        for name, cues in PHRASE_CUES.items():
            columns[f"phrase_{name}"] = np.array([_contains_any(t, cues) for t in lowered])
        columns["list_item"] = np.array([float(bool(re.match(r"\s*(?:[-*•–]|\(?\d{1,3}[.)])\s", t))) for t in texts])
        columns["question"] = np.array([float(t.rstrip().endswith("?")) for t in texts])
        columns["document_sentences_log"] = np.full(n, math.log1p(n))
        return np.column_stack([columns[name] for name in FEATURE_NAMES])

    def _similarity(self, vectors, text: str) -> np.ndarray:
        if not text.strip():
            return np.zeros(vectors.shape[0])
        return np.asarray((vectors @ self.vectorizer_.transform([text]).T).toarray()).ravel()

    @staticmethod
    def _sections(texts: list[str], headings: tuple[bool, ...], paragraphs: np.ndarray):
        """Section number, position in section, section size, whether the sentence is in
        the section's first paragraph, and the heading words that describe it."""
        n = len(texts)
        section = np.zeros(n)
        in_section = np.zeros(n)
        first_paragraph = np.zeros(n)
        cue_text = [""] * n
        current, count, opening_paragraph = 0, 0, None
        top_level, latest = "", ""
        sizes: dict[int, int] = {}
        for i in range(n):
            if headings[i]:
                # A heading opening the document starts section 0 rather than a new one.
                if i > 0:
                    current += 1
                count, opening_paragraph = 0, None
                latest = texts[i].lower()
                if not _SUBSECTION_NUMBER.match(texts[i]):
                    top_level = latest
                cue_text[i] = f"{top_level} {latest}"
                section[i] = current
                continue
            if opening_paragraph is None:
                opening_paragraph = paragraphs[i]
            section[i] = current
            in_section[i] = count
            first_paragraph[i] = float(paragraphs[i] == opening_paragraph)
            cue_text[i] = f"{top_level} {latest}"
            count += 1
            sizes[current] = count
        section_size = np.array([sizes.get(int(s), 1) for s in section], dtype=float)
        return section, in_section, section_size, first_paragraph, cue_text
