"""The store handle: one SQLite file, opened in one place, read and written only
through this object.

    store = Store("archive.sqlite")             # created (and migrated) when missing
    store = Store("archive.sqlite", read_only=True)
    store.documents.load(document_id)           # stored documents as records
    store.references.of(document_id)            # reference summaries
    store.evaluation.unscored()                 # scoring and comparison reads
    store.queries.find("tram")                  # search and ``show``
    store.exports.rows()                        # the rows every export is made of
    store.models.latest("house-style")          # trained methods kept with the store
    store.runs.begin("score", config)           # run bookkeeping (see store/runs.py)
    store.aspects.rows(document_ids)            # aspect summaries
    store.digests.record("incident-causes")     # digests across documents
    store.failures.record(run_id, path, reason, fingerprint)   # known or new failures
    store.add_summary(document_id, run_id, summary)   # writes (see store/writes.py)

Each concern lives in its own module and reaches the database through the handle's
connection; nothing outside ``store/`` holds SQL.
"""

from __future__ import annotations

import sqlite3
from contextlib import contextmanager

import sqlite_utils

from store.aspect_summaries import AspectSummaries
from store.digests import Digests
from store.documents import DocumentReads
from store.evaluation import EvaluationStore
from store.exports import ExportReads
from store.failures import FailureHistory
from store.health import known_store_error
from store.learned_models import LearnedModels
from store.queries import Queries
from store.references import References
from store.runs import RunLog
from store.schema import open_database
from store.writes import StoreWrites


class Store(StoreWrites):
    """A summary store in one SQLite file.

    ``read_only`` opens an existing store without creating or migrating anything
    (for commands that only read); writes then fail in SQLite itself.
    """

    def __init__(self, path: str, read_only: bool = False):
        self.path = path
        self.db: sqlite_utils.Database = open_database(path, read_only=read_only)
        self.references = References(self.db)
        self.documents = DocumentReads(self.db, self.references)
        self.evaluation = EvaluationStore(self.db, self.references)
        self.queries = Queries(self.db, self.references)
        self.exports = ExportReads(self.db, self.references)
        self.models = LearnedModels(self.db)
        self.runs = RunLog(self.db)
        self.aspects = AspectSummaries(self.db)
        self.digests = Digests(self.db)
        self.failures = FailureHistory(self.db)

    def close(self) -> None:
        self.db.close()

    def __enter__(self) -> Store:
        return self

    def __exit__(self, *exc) -> None:
        self.close()

    @contextmanager
    def transaction(self):
        """All writes inside are committed together or not at all; nests.

        sqlite-utils' ``atomic()``: an explicit BEGIN/COMMIT, with savepoints when
        nested. (A plain ``with db.conn:`` is not enough: sqlite-utils commits each
        write made outside an explicit transaction on its own, so a kill between two
        of them would leave, say, a document without its sentences.)
        """
        try:
            with self.db.atomic():
                yield
        except sqlite3.Error as error:
            # A full disk or a store that cannot be written ends in a one-line
            # StoreUnusable (rolled back: the store stays as the last commit left it).
            translated = known_store_error(error, self.path)
            if translated is None:
                raise
            raise translated from None
