"""Trained methods kept with the store (table ``learned_models``, schema version 2).

A row holds the fitted method pickled (its scikit-learn classifier and its feature
extractor with the archive's IDF), the feature list it expects, the ids of the
documents it was trained on, its cross-validated scores and the library versions
it was trained with. Pickles run code when loaded: a store is trusted as the
program's own files are.
"""

from __future__ import annotations

import json
import pickle
from dataclasses import dataclass

import sqlite_utils

from store.runs import library_versions, now


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
    method: object


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
                    "model": pickle.dumps(method, protocol=pickle.HIGHEST_PROTOCOL),
                }
            ).last_pk

    def latest(self, name: str) -> LearnedModel | None:
        """The most recently stored model of method ``name`` (None when there is none)."""
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
            method=pickle.loads(row[9]),
        )
