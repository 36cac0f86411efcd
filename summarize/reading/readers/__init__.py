"""Format readers. Each reader turns the raw bytes of one file into an ``Extract``
(blocks of text plus whatever title, date and metadata the format carries); the
ingest stage adds identity (path, hash, size) and reference summaries."""
