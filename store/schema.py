"""The SQLite schema, created and migrated in order by ``PRAGMA user_version``.

One file holds everything, readable with any SQLite tool:

    documents            one row per (record_key, content hash); text held once
    document_sentences   sentence spans of each document (provenance, highlighting)
    reference_summaries  the current human summary of a document, where and since when
    runs                 one row per run: configuration, library versions, host, outcome
    ingest_problems      files that could not be read (or were skipped), per run, with
                         a fingerprint of what failed (version 5): known failures
    summaries            one per (document, method, parameter hash)
    summary_sentences    each summary sentence, in order
    sentence_sources     the source span(s) behind each summary sentence
    flags                faithfulness warnings on summaries
    scores               ROUGE and other metrics per summary
    learned_models       trained sentence scorers (version 2): the fitted model,
                         what it was trained on, and its cross-validated scores
    aspect_summaries     answers to aspects per (document, aspect, method, parameter
                         hash), with a confidence; ``addressed = 0`` and no sentences
                         when the document does not address the aspect
    aspect_sentences     the spans of each aspect summary, in order
    digests              summaries across a selection of documents: the selection,
                         the settings, the documents it resolved to; one row per
                         version of a named digest
    digest_sentences     each digest sentence, in order
    digest_citations     the document span(s) behind each digest sentence (merged
                         near-duplicates keep every citation)
    reference_history    earlier reference summaries of a document (version 6),
    superseded_scores    and the scores computed against them

Full-text search (FTS5) covers document titles, record keys and text (version 3)
and summary texts.
"""

from __future__ import annotations

import os
import sqlite3
import urllib.parse

import sqlite_utils

from store.errors import StoreNotReadable, StoreReadOnly, StoreTooNew, StoreUnusable
from store.health import check_store_file, check_tables, store_error

SCHEMA_VERSION = 6


def _create_v1(db: sqlite_utils.Database) -> None:
    db["runs"].create(
        {
            "id": int,
            "started": str,
            "finished": str,
            "status": str,
            "command": str,
            "config": str,
            "versions": str,
            "host": str,
            "pid": int,
            "counts": str,
        },
        pk="id",
    )
    db["documents"].create(
        {
            "id": int,
            "record_key": str,
            "path": str,
            "sha256": str,
            "format": str,
            "title": str,
            "date": str,
            "size": int,
            "encoding": str,
            "text": str,
            "metadata": str,
            "status": str,
            "duplicate_of": int,
            "first_run": int,
            "last_run": int,
        },
        pk="id",
        foreign_keys=[("duplicate_of", "documents", "id"), ("first_run", "runs", "id"), ("last_run", "runs", "id")],
    )
    db["documents"].create_index(["record_key", "sha256"], unique=True)
    db["documents"].create_index(["sha256"])
    db["documents"].create_index(["status"])
    db["document_sentences"].create(
        {"document_id": int, "position": int, "start": int, "end": int, "paragraph": int, "is_heading": int},
        pk=("document_id", "position"),
        foreign_keys=[("document_id", "documents", "id")],
    )
    db["reference_summaries"].create(
        {"document_id": int, "text": str, "source": str},
        pk="document_id",
        foreign_keys=[("document_id", "documents", "id")],
    )
    db["ingest_problems"].create(
        {"id": int, "run_id": int, "path": str, "kind": str, "reason": str, "created": str},
        pk="id",
        foreign_keys=[("run_id", "runs", "id")],
    )
    db["ingest_problems"].create_index(["path"])
    db["summaries"].create(
        {
            "id": int,
            "document_id": int,
            "method": str,
            "param_hash": str,
            "params": str,
            "text": str,
            "seconds": float,
            "details": str,
            "run_id": int,
            "created": str,
        },
        pk="id",
        foreign_keys=[("document_id", "documents", "id"), ("run_id", "runs", "id")],
    )
    db["summaries"].create_index(["document_id", "method", "param_hash"], unique=True)
    db["summaries"].create_index(["method"])
    db["summary_sentences"].create(
        {"summary_id": int, "position": int, "text": str, "score": float},
        pk=("summary_id", "position"),
        foreign_keys=[("summary_id", "summaries", "id")],
    )
    db["sentence_sources"].create(
        {"summary_id": int, "position": int, "rank": int, "start": int, "end": int, "similarity": float},
        pk=("summary_id", "position", "rank"),
        foreign_keys=[("summary_id", "summaries", "id")],
    )
    db["flags"].create(
        {"id": int, "summary_id": int, "position": int, "kind": str, "detail": str},
        pk="id",
        foreign_keys=[("summary_id", "summaries", "id")],
    )
    db["flags"].create_index(["summary_id"])
    db["scores"].create(
        {"summary_id": int, "metric": str, "precision": float, "recall": float, "f1": float, "created": str},
        pk=("summary_id", "metric"),
        foreign_keys=[("summary_id", "summaries", "id")],
    )
    db["documents"].enable_fts(["title", "path"], create_triggers=True, tokenize="porter")
    db["summaries"].enable_fts(["text"], create_triggers=True, tokenize="porter")


def _create_v2(db: sqlite_utils.Database) -> None:
    """Version 2 adds the trained sentence scorers. ``model`` holds the fitted method
    (scikit-learn model and feature extractor) in skops' format, which loads without
    running code (rows of earlier versions hold a pickle, never loaded; see
    ``store/learned_models.py``); ``features`` is the feature list it expects."""
    db["learned_models"].create(
        {
            "id": int,
            "name": str,
            "created": str,
            "run_id": int,
            "params": str,
            "features": str,
            "training_documents": str,
            "metrics": str,
            "versions": str,
            "model": bytes,
        },
        pk="id",
        foreign_keys=[("run_id", "runs", "id")],
    )
    db["learned_models"].create_index(["name", "created"])


_DOCUMENT_FTS_COLUMNS = "title, record_key, text"
SEARCH_DOCUMENTS_INDEX = "documents_search"
SEARCH_SUMMARIES_INDEX = "summaries_search"
GENERATED_SENTENCES_INDEX = "sentence_sources_generated"
# A source link at least this similar is the summary sentence itself (extractive).
VERBATIM_SIMILARITY = 0.999


def _create_v3(db: sqlite_utils.Database) -> None:
    """Version 3 makes the documents' text searchable: the document index covers title,
    record key and text (it covered title and path), an external-content FTS5 table,
    so the text is still held once. Diacritics are folded (Brelade finds Brélade).
    The triggers fire only when an indexed column changes: a run touches every
    document's ``last_run`` and status, which must not re-index its text.

    Two covering indexes serve search: a document row holds its whole text, so
    reading its status or date from the table means reading past the text; these
    indexes hold, by id, what search filters on and lists, and which document and
    method a summary belongs to. A partial index lists the summaries with generated
    (not verbatim) sentences: only those can hold words their document's text lacks,
    so only those are searched to find documents."""
    db["documents"].disable_fts()
    db.execute(f"create index {SEARCH_DOCUMENTS_INDEX} on documents (id, status, format, date, path, record_key, title)")
    db.execute(f"create index {SEARCH_SUMMARIES_INDEX} on summaries (id, document_id, method)")
    db.execute(
        f"create index {GENERATED_SENTENCES_INDEX} on sentence_sources (summary_id) "
        f"where similarity < {VERBATIM_SIMILARITY}"
    )
    db.execute(
        f"create virtual table documents_fts using fts5({_DOCUMENT_FTS_COLUMNS}, content='documents', "
        "content_rowid='id', tokenize='porter unicode61 remove_diacritics 2')"
    )
    db.execute("insert into documents_fts(documents_fts) values ('rebuild')")
    new_values = "new.id, new.title, new.record_key, new.text"
    old_values = "'delete', old.id, old.title, old.record_key, old.text"
    db.execute(
        "create trigger documents_fts_insert after insert on documents begin "
        f"insert into documents_fts(rowid, {_DOCUMENT_FTS_COLUMNS}) values ({new_values}); end"
    )
    db.execute(
        "create trigger documents_fts_delete after delete on documents begin "
        f"insert into documents_fts(documents_fts, rowid, {_DOCUMENT_FTS_COLUMNS}) values ({old_values}); end"
    )
    db.execute(
        f"create trigger documents_fts_update after update of {_DOCUMENT_FTS_COLUMNS} on documents begin "
        f"insert into documents_fts(documents_fts, rowid, {_DOCUMENT_FTS_COLUMNS}) values ({old_values}); "
        f"insert into documents_fts(rowid, {_DOCUMENT_FTS_COLUMNS}) values ({new_values}); end"
    )



def _create_aspects_and_digests(db: sqlite_utils.Database) -> None:
    """Aspect summaries per document and digests across documents, with provenance:
    every sentence is a span into a stored document's text."""
    db["aspect_summaries"].create(
        {
            "id": int,
            "document_id": int,
            "aspect": str,
            "method": str,
            "param_hash": str,
            "params": str,
            "addressed": int,
            "confidence": float,
            "details": str,
            "run_id": int,
            "created": str,
        },
        pk="id",
        foreign_keys=[("document_id", "documents", "id"), ("run_id", "runs", "id")],
    )
    db["aspect_summaries"].create_index(["document_id", "aspect", "method", "param_hash"], unique=True)
    db["aspect_summaries"].create_index(["aspect", "method", "param_hash"])
    db["aspect_sentences"].create(
        {"aspect_summary_id": int, "position": int, "start": int, "end": int, "score": float},
        pk=("aspect_summary_id", "position"),
        foreign_keys=[("aspect_summary_id", "aspect_summaries", "id")],
    )
    db["digests"].create(
        {
            "id": int,
            "name": str,
            "version": int,
            "selection": str,
            "settings": str,
            "documents": str,
            "fingerprint": str,
            "details": str,
            "run_id": int,
            "created": str,
        },
        pk="id",
        foreign_keys=[("run_id", "runs", "id")],
    )
    db["digests"].create_index(["name", "version"], unique=True)
    db["digest_sentences"].create(
        {"digest_id": int, "position": int, "score": float},
        pk=("digest_id", "position"),
        foreign_keys=[("digest_id", "digests", "id")],
    )
    db["digest_citations"].create(
        {"digest_id": int, "position": int, "rank": int, "document_id": int, "start": int, "end": int,
         "similarity": float},
        pk=("digest_id", "position", "rank"),
        foreign_keys=[("digest_id", "digests", "id"), ("document_id", "documents", "id")],
    )



def _add_failure_fingerprints(db: sqlite_utils.Database) -> None:
    """Version 5 lets a run tell a known failure from a new one: each problem keeps
    a fingerprint of what failed (store/failures.py), the method that failed on it
    (NULL for reading and splitting), and, when the same content failed the same way
    in an earlier run, the first run of that streak. Documents get
    an index on their file path, by which a failure is checked against the last
    successful reading of that file."""
    db["ingest_problems"].add_column("fingerprint", str)
    db["ingest_problems"].add_column("method", str)
    db["ingest_problems"].add_column("known_since", int)
    db["ingest_problems"].create_index(["path", "fingerprint"])
    db["documents"].create_index(["path"])




def _add_reference_history_and_date_sources(db: sqlite_utils.Database) -> None:
    """Version 6. References that change on a rerun keep their past (``store/reference_history.py``):
    ``reference_summaries.since``, ``reference_history`` (earlier references) and
    ``superseded_scores`` (scores computed against them). ``documents.date_source``
    says where a document's date was found, ``documents.modified`` the file's
    modification time (``store/duplicates.py``). Existing references are current since
    their document was first stored."""
    db.execute("alter table documents add column date_source text")
    db.execute("alter table documents add column modified text")
    db.execute("alter table reference_summaries add column since text")
    db.execute(
        "update reference_summaries set since = (select r.started from documents d join runs r "
        "on r.id = d.first_run where d.id = reference_summaries.document_id)"
    )
    db["reference_history"].create(
        {"id": int, "document_id": int, "text": str, "source": str, "since": str, "until": str, "replaced_in_run": int},
        pk="id",
        foreign_keys=[("document_id", "documents", "id"), ("replaced_in_run", "runs", "id")],
    )
    db["reference_history"].create_index(["document_id"])
    db["superseded_scores"].create(
        {"history_id": int, "summary_id": int, "metric": str, "precision": float, "recall": float, "f1": float,
         "created": str},
        pk=("history_id", "summary_id", "metric"),
        foreign_keys=[("history_id", "reference_history", "id"), ("summary_id", "summaries", "id")],
    )


MIGRATIONS = {
    1: _create_v1,
    2: _create_v2,
    3: _create_v3,
    4: _create_aspects_and_digests,
    5: _add_failure_fingerprints,
    6: _add_reference_history_and_date_sources,
}


def open_database(path: str, read_only: bool = False) -> sqlite_utils.Database:
    """Open a store and bring its schema up to date (creating the file if needed).

    ``read_only`` opens an existing store without writing anything, not even on
    open, so that it can be read in a folder (or on a medium) this process may not
    write; a store of an older schema is upgraded first when it can be written.
    Raises a one-line :class:`~store.errors.StoreUnusable` for a file that is not a
    summary store, is damaged, or was written by a newer version.
    """
    check_store_file(path)
    try:
        if read_only:
            return _open_readonly(path)
        return _open_for_writing(path)
    except sqlite3.Error as error:
        raise store_error(error, path) from None
    except OSError as error:
        raise store_error(error, path) from None


def _schema_state(db: sqlite_utils.Database, path: str) -> int:
    """The store's schema version, after refusing foreign and newer databases."""
    version = db.execute("PRAGMA user_version").fetchone()[0]
    tables = {row[0] for row in db.execute("select name from sqlite_master where type = 'table'")}
    check_tables(path, tables, version)
    if version > SCHEMA_VERSION:
        raise StoreTooNew(
            f"{path}: store schema version {version} is newer than this program understands ({SCHEMA_VERSION}); "
            "use the newer version of the program that wrote it"
        )
    return version


def _open_for_writing(path: str) -> sqlite_utils.Database:
    db = sqlite_utils.Database(path)
    db.execute("PRAGMA foreign_keys = ON")
    db.execute("PRAGMA busy_timeout = 30000")
    # In WAL mode, NORMAL skips the fsync at every commit: a killed process loses
    # nothing committed, and a power cut may lose the last commits but never
    # corrupts the file (sqlite.org/pragma.html#pragma_synchronous); a rerun redoes them.
    db.execute("PRAGMA synchronous = NORMAL")
    version = _schema_state(db, path)
    if version < SCHEMA_VERSION:
        # WAL lets readers (find, show, export) work while a run writes.
        db.enable_wal()
        # One transaction: a kill while creating the schema leaves an empty file, not half a schema.
        with db.atomic():
            for step in range(version + 1, SCHEMA_VERSION + 1):
                MIGRATIONS[step](db)
            db.execute(f"PRAGMA user_version = {SCHEMA_VERSION}")
    return db


def _open_readonly(path: str) -> sqlite_utils.Database:
    """SQLite's own read-only mode: nothing is created, migrated or written. Besides
    ``mode=ro`` (the connection cannot write the file), ``PRAGMA query_only`` makes any
    write statement fail (sqlite.org/uri.html, sqlite.org/pragma.html#pragma_query_only)."""
    if not os.path.isfile(path):
        raise StoreNotReadable(f"{path}: no such store")
    uri = "file:" + urllib.parse.quote(os.path.abspath(path)) + "?mode=ro"
    try:
        db = _connect_readonly(uri)
    except sqlite3.OperationalError:
        # A WAL store in a folder this process cannot write, whose -shm file is absent,
        # opens only as immutable (sqlite.org/wal.html#readonly); no writer can be at
        # work there, since a writer needs that folder too.
        db = _connect_readonly(uri + "&immutable=1")
    version = _schema_state(db, path)
    if version == 0:
        raise StoreUnusable(f"{path}: an empty store (no run has stored anything yet)")
    if version < SCHEMA_VERSION:
        if not (os.access(path, os.W_OK) and os.access(os.path.dirname(os.path.abspath(path)), os.W_OK)):
            raise StoreReadOnly(
                f"{path}: store schema version {version} is older than this program's ({SCHEMA_VERSION}) and "
                "the store cannot be written here to upgrade it; run `summarize run` on it where it can be"
            )
        db.close()
        _open_for_writing(path).close()
        db = _connect_readonly(uri)
    return db


def _connect_readonly(uri: str) -> sqlite_utils.Database:
    connection = sqlite3.connect(uri, uri=True)
    connection.execute("PRAGMA query_only = ON")
    connection.execute("PRAGMA busy_timeout = 30000")
    # Opening is lazy: read the schema now, so that an unusable file fails here.
    connection.execute("PRAGMA user_version").fetchone()
    return sqlite_utils.Database(connection)
