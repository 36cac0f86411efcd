"""A small store for the search, export and review-site tests, written through the
store's own write methods: invented utility documents (one long enough that its last
sentences start far below the first screen), a duplicate, a replaced and a missing
version, a generated summary with support links and a flagged number, oracle
summaries at two budgets, and a document whose title, text and path carry script
and attribute-breaking payloads."""

from __future__ import annotations

import hashlib

from store.records import Document, Flag, SourceLink, Summary, SummarySentence
from store.store import Store
from summarize.reading.split import split_document

# Every payload must come out as text on a page: none may run, close an element or
# open an attribute.
PAYLOADS = (
    "<script>window.__pwned = 1</script>",
    "\"><img src=x onerror=\"window.__pwned=2\">",
    "'><svg onload='window.__pwned=3'>",
    "</textarea></title><iframe src=javascript:window.__pwned=4>",
    "{{ 7*7 }} {% raw %}",
    "javascript:window.__pwned=5",
    "=HYPERLINK(\"http://example.invalid\",\"x\")",
)

FILLER = (
    "The duty engineer logged routine readings at the start of each shift. "
    "Pressure and flow at the outlet main stayed inside the normal operating band. "
    "No alarms were raised by the telemetry outstation during the period. "
)


def _sha(text: str) -> str:
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


def _document(key: str, folder: str, title: str, text: str, date: str | None, fmt: str = "txt",
              reference: str | None = None) -> Document:
    path = f"/archive/{folder}/{key}.{fmt}"
    return Document(
        record_key=path, path=path, text=text, format=fmt, sha256=_sha(key + text), size=len(text.encode()),
        title=title, date=date, date_source="document text" if date else None, reference_summary=reference, reference_source="sidecar:test" if reference else None,
    )


def _extractive(method: str, params: dict, text: str, segmentation, picks: list[int]) -> Summary:
    sentences = [
        SummarySentence(segmentation.sentences[i].slice(text), 1.0 - 0.1 * rank, (SourceLink(segmentation.sentences[i], 1.0),))
        for rank, i in enumerate(picks)
    ]
    return Summary(method=method, params=params, sentences=sentences)


LEAD = {"budget": {"sentences": 2}}
LEAD_WORDS = {"budget": {"words": 40}}


def build_review_store(path) -> dict:
    """Write the store at ``path``; returns the ids of its notable documents."""
    store = Store(str(path))
    run_id = store.runs.begin("test", {})
    ids = {}

    long_text = (
        "Bollards were installed on the tram platform edge at Ambry High Street after the collision. "
        + FILLER * 40
        + "The final review found the new bollards had been struck twice in the first month. "
        "Scour protection at the culvert outfall was also repaired."
    )
    document = _document(
        "INC-2025-030_platform_bollards", "incidents", "INC-2025-030 Platform bollards after the pedestrian contact",
        long_text, "2025-03-14", reference="New bollards were fitted; they were struck twice in a month.",
    )
    segmentation = split_document(document)
    ids["long"], _, _ = store.add_document(document, segmentation, run_id)
    last = len(segmentation.sentences) - 2
    store.add_summary(ids["long"], run_id, _extractive("lead", LEAD, long_text, segmentation, [0, 1]))
    store.add_summary(ids["long"], run_id, _extractive("lead", LEAD_WORDS, long_text, segmentation, [0, 1]))
    store.add_summary(ids["long"], run_id, _extractive("textrank", LEAD, long_text, segmentation, [0, last]))
    store.add_summary(ids["long"], run_id, _extractive("oracle", LEAD, long_text, segmentation, [0, last]))
    store.add_summary(ids["long"], run_id, _extractive("oracle", LEAD_WORDS, long_text, segmentation, [last]))
    generated = Summary(
        method="seq2seq",
        params={"model": "tiny-test", "generation": {"max_new_tokens": 40}},
        sentences=[
            SummarySentence("Platform bollards were struck 3 times after fitting.", 0.0,
                            (SourceLink(segmentation.sentences[last], 0.62), SourceLink(segmentation.sentences[0], 0.41))),
        ],
        flags=[Flag("unsupported-number", "3 does not occur in the source", 0)],
    )
    store.add_summary(ids["long"], run_id, generated)

    minutes_text = (
        "The board noted incident INS-2025-014 in passing. Members asked about diesel generator hire. "
        "Any other business was taken in closed session."
    )
    document = _document("2025-04-02_board_minutes", "minutes", "Board minutes, 2 April 2025", minutes_text,
                         "2025-04-02", fmt="md")
    segmentation = split_document(document)
    ids["minutes"], _, _ = store.add_document(document, segmentation, run_id)
    store.add_summary(ids["minutes"], run_id, _extractive("lead", LEAD, minutes_text, segmentation, [0, 1]))

    inspection_text = (
        "The inspection of the Wendle viaduct found corrosion on two cantilevers.\n\n"
        "Replacement of the cantilevers is planned for the spring possession.\nNo speed restriction is needed."
    )
    document = _document("INS-2025-014_wendle_viaduct", "inspections", "INS-2025-014 Wendle viaduct inspection",
                         inspection_text, "2025-06-20", fmt="pdf", reference="Two cantilevers are corroded.")
    segmentation = split_document(document)
    ids["inspection"], _, _ = store.add_document(document, segmentation, run_id)
    store.add_summary(ids["inspection"], run_id, _extractive("lead", LEAD, inspection_text, segmentation, [0, 1]))

    # The same file under a second name: a duplicate, not summarized.
    copy = _document("INS-2025-014_wendle_viaduct", "inspections", "INS-2025-014 Wendle viaduct inspection",
                     inspection_text, "2025-06-20", fmt="pdf")
    copy.record_key = copy.path = "/archive/copies/copy_of_wendle.pdf"
    ids["duplicate"], _, status = store.add_document(copy, split_document(copy), run_id)
    assert status == "duplicate"

    old_text = "Draft: the depot roof survey found slipped slates over bay 3."
    document = _document("depot_roof_survey", "inspections", "Depot roof survey", old_text, "2024-02-01")
    ids["replaced"], _, _ = store.add_document(document, split_document(document), run_id)
    new_text = "Final: the depot roof survey found slipped slates over bays 3 and 4."
    document = _document("depot_roof_survey", "inspections", "Depot roof survey", new_text, "2024-02-09")
    segmentation = split_document(document)
    ids["current"], _, _ = store.add_document(document, segmentation, run_id)
    store.add_summary(ids["current"], run_id, _extractive("lead", LEAD, new_text, segmentation, [0]))

    gone_text = "The scour valve at Quillham dam was exercised and found free."
    document = _document("quillham_scour_valve", "inspections", "Quillham scour valve exercise", gone_text, "2024-07-01")
    segmentation = split_document(document)
    ids["missing"], _, _ = store.add_document(document, segmentation, run_id)
    store.add_summary(ids["missing"], run_id, _extractive("lead", LEAD, gone_text, segmentation, [0]))
    store.mark_missing(ids["missing"])

    payload = " ".join(PAYLOADS)
    payload_text = f"Payload report line one {payload}.\nSecond line of the payload report mentions valves."
    document = Document(
        record_key=f"/archive/odd/{PAYLOADS[1]}.txt", path=f"/archive/odd/{PAYLOADS[1]}.txt", text=payload_text,
        format="txt", sha256=_sha(payload_text), size=len(payload_text), title=f"{PAYLOADS[6]} Payload {PAYLOADS[0]} {PAYLOADS[2]}",
        date="2025-01-05", reference_summary=f"Reference {PAYLOADS[3]}", reference_source=f"sidecar:{PAYLOADS[1]}",
    )
    segmentation = split_document(document)
    ids["payload"], _, _ = store.add_document(document, segmentation, run_id)
    store.add_summary(ids["payload"], run_id, _extractive("lead", LEAD, payload_text, segmentation,
                                                          list(range(min(2, len(segmentation.sentences))))))
    store.runs.finish(run_id, "finished", {})
    store.close()
    return ids
