"""The summary store, the bottom layer: everything outside this package reaches the
SQLite file through :class:`Store`."""

from store.store import Store

__all__ = ["Store"]
