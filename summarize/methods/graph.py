"""Sparse sentence graphs and weighted PageRank."""

from __future__ import annotations

from collections.abc import Callable

import numpy as np
from scipy import sparse

_BLOCK_ROWS = 512


def top_k_symmetric(
    block_weights: Callable[[slice], np.ndarray], n: int, top_k: int | None
) -> sparse.csr_matrix:
    """Build a symmetric sparse graph from dense row blocks of a weight matrix.

    ``block_weights(rows)`` returns the dense ``len(rows) × n`` weights for a block of
    rows. Each row keeps its ``top_k`` largest positive off-diagonal weights (all when
    ``top_k`` is None); the result is the elementwise maximum of the matrix and its
    transpose, so an edge kept by either end is kept. Peak memory is one block
    (``512 × n``) plus ``n · top_k`` kept edges.
    """
    rows_kept, cols_kept, weights_kept = [], [], []
    for start in range(0, n, _BLOCK_ROWS):
        rows = slice(start, min(start + _BLOCK_ROWS, n))
        block = np.asarray(block_weights(rows), dtype=float)
        local = np.arange(block.shape[0])
        block[local, local + start] = 0.0
        block[~np.isfinite(block)] = 0.0
        if top_k is not None and top_k < n - 1:
            # argpartition keeps the k largest per row without a full sort.
            keep = np.argpartition(-block, top_k, axis=1)[:, :top_k]
            values = np.take_along_axis(block, keep, axis=1)
        else:
            keep = np.tile(np.arange(n), (block.shape[0], 1))
            values = block
        positive = values > 0
        row_index = np.repeat(local + start, keep.shape[1]).reshape(keep.shape)
        rows_kept.append(row_index[positive])
        cols_kept.append(keep[positive])
        weights_kept.append(values[positive])
    if not rows_kept:
        return sparse.csr_matrix((n, n))
    graph = sparse.csr_matrix(
        (np.concatenate(weights_kept), (np.concatenate(rows_kept), np.concatenate(cols_kept))),
        shape=(n, n),
    )
    return graph.maximum(graph.T).tocsr()


def pagerank(
    weights: sparse.spmatrix,
    damping: float = 0.85,
    tolerance: float = 1e-10,
    max_iterations: int = 200,
    teleport: np.ndarray | None = None,
) -> np.ndarray:
    """Weighted PageRank by power iteration (Brin & Page 1998).

    ``PR = (1 − d) · v + d · (Mᵀ PR + dangling mass · v)`` where ``M`` is ``weights``
    with each row divided by its sum and ``v`` the teleport distribution (uniform
    ``1/n`` unless ``teleport`` is given; it is normalised to sum to 1). Rows summing
    to zero (no edges) spread their rank by ``v``, as networkx's ``pagerank`` does with
    its ``personalization`` argument. A non-uniform ``v`` is personalised (biased)
    PageRank (Haveliwala 2002), which query-biased LexRank builds on. Stops when the
    l1 change falls below ``n · tolerance``.
    """
    n = weights.shape[0]
    if n == 0:
        return np.zeros(0)
    if teleport is None:
        jump = np.full(n, 1.0 / n)
    else:
        jump = np.asarray(teleport, dtype=float)
        if jump.shape != (n,) or jump.min() < 0 or jump.sum() <= 0:
            raise ValueError("teleport must hold one non-negative weight per node, not all zero")
        jump = jump / jump.sum()
    weights = sparse.csr_matrix(weights, dtype=float)
    out_weight = np.asarray(weights.sum(axis=1)).ravel()
    dangling = out_weight == 0
    inverse = np.divide(1.0, out_weight, out=np.zeros(n), where=~dangling)
    transition_t = (sparse.diags(inverse) @ weights).T.tocsr()
    rank = jump.copy()
    for _ in range(max_iterations):
        previous = rank
        rank = damping * (transition_t @ rank + previous[dangling].sum() * jump) + (1 - damping) * jump
        if np.abs(rank - previous).sum() < n * tolerance:
            break
    return rank
