"""The caution that every report, export and page carries."""

CAUTION = (
    "Summaries are finding aids: check the source document before acting on safety, "
    "legal or personnel matters. The store holds full document text and falls under "
    "the archive's access and retention rules."
)
