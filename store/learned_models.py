"""Trained methods kept with the store (table ``learned_models``, schema version 2).

A row holds the fitted method in skops' format (a zip of JSON and NumPy arrays
read without pickle: ``skops.io``), the feature list it expects, the ids of the
documents it was trained on, its cross-validated scores and the library versions
it was trained with. Loading rebuilds only the types skops trusts by default
(NumPy, SciPy and scikit-learn's own) and those the caller names, so a store from
elsewhere cannot run code through its model: a model naming any other type is
refused. Rows written by earlier versions hold a pickle, which can run code when
loaded; they are never loaded, and the message says how to train the method again.
"""

from __future__ import annotations

import json
import zipfile
from collections.abc import Sequence
from dataclasses import dataclass

import sqlite_utils

from store.errors import SummarizerError
from store.runs import library_versions, now

SKOPS = "skops"
PICKLE = "pickle"
# A pickle of protocol 2 or later starts with the PROTO opcode; a zip with 'PK'.
_PICKLE_START = b"\x80"
_ZIP_START = b"PK"


class UnusableModel(SummarizerError):
    """A stored model that is not loaded: an old pickle, a damaged blob, or one that
    names types outside the trusted list."""


@dataclass
class LearnedModel:
    id: int
    name: str
    created: str
    run_id: int | None
    params: dict
    features: list[str]
    training_documents: list[int]
    metrics: dict
    versions: dict
    blob: bytes

    @property
    def format(self) -> str:
        """'skops', 'pickle' (written by an earlier version) or 'unknown'."""
        if self.blob.startswith(_ZIP_START):
            return SKOPS
        return PICKLE if self.blob.startswith(_PICKLE_START) else "unknown"

    def load(self, trusted_types: Sequence[str]) -> object:
        """The fitted method. ``trusted_types`` names (as 'module.Class') the types,
        beyond those skops trusts by default, the caller's method is made of. Raises
        :class:`UnusableModel` for anything else, without running any code of it."""
        where = f"stored {self.name} model #{self.id} (trained {self.created})"
        retrain = "train it again with `summarize train --db STORE`"
        if self.format == PICKLE:
            raise UnusableModel(
                f"{where} is in the pickle format of earlier versions, which can run code when loaded, "
                f"so it was not loaded; {retrain}"
            )
        import skops.io  # imported on use: it brings scikit-learn, which `import store` should not

        try:
            untrusted = set(skops.io.get_untrusted_types(data=self.blob)) - set(trusted_types)
        except (zipfile.BadZipFile, ValueError, KeyError, TypeError, json.JSONDecodeError) as error:
            raise UnusableModel(f"{where} is damaged ({type(error).__name__}); {retrain}") from None
        if untrusted:
            raise UnusableModel(
                f"{where} names types this program does not trust ({', '.join(sorted(untrusted))}), "
                f"so it was not loaded; {retrain}"
            )
        try:
            return skops.io.loads(self.blob, trusted=list(trusted_types))
        except Exception as error:  # noqa: BLE001 - a damaged blob can fail anywhere in the loader
            raise UnusableModel(f"{where} is damaged ({type(error).__name__}); {retrain}") from None


class LearnedModels:
    """The ``learned_models`` table."""

    def __init__(self, db: sqlite_utils.Database):
        self.db = db

    def save(
        self,
        method,
        run_id: int | None,
        training_documents: list[int],
        features: list[str],
        metrics: dict,
    ) -> int:
        """Store a fitted method; returns the new row's id."""
        import skops.io  # imported on use: it brings scikit-learn, which `import store` should not

        with self.db.atomic():
            return self.db["learned_models"].insert(
                {
                    "name": method.name,
                    "created": now(),
                    "run_id": run_id,
                    "params": json.dumps(method.get_params(), sort_keys=True, default=str),
                    "features": json.dumps(list(features)),
                    "training_documents": json.dumps(sorted(training_documents)),
                    "metrics": json.dumps(metrics, sort_keys=True, default=str),
                    "versions": json.dumps(library_versions(), sort_keys=True),
                    "model": skops.io.dumps(method),
                }
            ).last_pk

    def latest(self, name: str) -> LearnedModel | None:
        """The most recently stored model of method ``name`` (None when there is none),
        not yet loaded (:meth:`LearnedModel.load`)."""
        row = self.db.execute(
            "select id, name, created, run_id, params, features, training_documents, metrics, versions, model "
            "from learned_models where name = ? order by id desc limit 1",
            [name],
        ).fetchone()
        if row is None:
            return None
        return LearnedModel(
            id=row[0],
            name=row[1],
            created=row[2],
            run_id=row[3],
            params=json.loads(row[4]),
            features=json.loads(row[5]),
            training_documents=json.loads(row[6]),
            metrics=json.loads(row[7]),
            versions=json.loads(row[8]),
            blob=row[9],
        )
