"""Joins on integer keys (the substance codes), vectorized: how checks relate the rows of
records, references and points without a Python loop; and, per key, whether a group of
records agrees against its reference value (:func:`outvoted`).
"""

from __future__ import annotations

import numpy as np

__all__ = ["match", "outvoted", "same_key_pairs"]


def match(key_a: np.ndarray, key_b: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Every (i, j) with key_a[i] == key_b[j] (an inner join on integer keys), vectorized;
    negative keys never match.
    """
    a = np.flatnonzero(key_a >= 0)
    b = np.flatnonzero(key_b >= 0)
    keys = np.concatenate([key_a, key_b])
    ia, ib = same_key_pairs(keys, a, b + key_a.size)
    return ia, ib - key_a.size


def same_key_pairs(keys: np.ndarray, a: np.ndarray, b: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Every (i, j) with i from ``a`` and j from ``b`` and keys[i] == keys[j], vectorized.

    Parameters
    ----------
    keys : ndarray of int
        A key per row (e.g. the substance code).
    a, b : ndarray of int
        Row indices of the two sides.

    Returns
    -------
    ia, ib : ndarray of int
        The pairs, grouped by ``a`` in its order.
    """
    if a.size == 0 or b.size == 0:
        return np.empty(0, dtype=np.int64), np.empty(0, dtype=np.int64)
    order = np.argsort(keys[b], kind="stable")
    b_sorted = b[order]
    kb = keys[b_sorted]
    ka = keys[a]
    lo = np.searchsorted(kb, ka, side="left")
    hi = np.searchsorted(kb, ka, side="right")
    counts = hi - lo
    ia = np.repeat(a, counts)
    starts = np.repeat(lo - np.concatenate(([0], np.cumsum(counts)[:-1])), counts)
    ib = b_sorted[starts + np.arange(ia.size)]
    return ia.astype(np.int64), ib.astype(np.int64)


def outvoted(keys: np.ndarray, d: np.ndarray, tol: np.ndarray) -> np.ndarray:
    """For each row, whether its group (rows of one ``key``, e.g. a substance and phase) has
    two or more rows that all miss their reference on the same side, each by ``d`` beyond
    its tolerance ``tol``, while agreeing with each other within the smallest tolerance:
    several records against one reference value. Negative keys form no group.
    """
    out = np.zeros(keys.size, dtype=bool)
    with np.errstate(invalid="ignore"):
        miss = ~(np.abs(d) <= tol) & (keys >= 0)
    for key in np.unique(keys[miss]):
        k = np.flatnonzero(keys == key)
        if k.size < 2 or not miss[k].all():
            continue
        same_side = (np.sign(d[k]) == np.sign(d[k[0]])).all()
        agree = (d[k].max() - d[k].min()) <= tol[k].min()
        if same_side and agree:
            out[k] = True
    return out
