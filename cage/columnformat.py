"""Formatting whole columns of numbers as fixed-decimal text at once (numpy, no per-cell Python).

A table of 100,000 rows and some thirty number columns would take seconds with one
``"%.3f" % value`` per cell; here each column becomes a byte matrix (one row per table row,
one byte per character, NUL for padding) built from integer digit arithmetic, the columns
are joined side by side with the separators, and the padding is dropped in one pass.

Rounding: a value is scaled by 10**decimals and rounded half to even (``numpy.round``); this
matches ``"%.{d}f"`` except, rarely, in the last digit of a value that is a tie only after
the scaling's own rounding error. NaN becomes an empty cell. Values too large for exact
integer digits (|value| * 10**decimals >= 1e15) fall back to Python's formatting for that
column.
"""
from __future__ import annotations

import numpy as np

_EXACT_LIMIT = 1e15
_PAD = 0


def _fallback(values: np.ndarray, decimals: int) -> np.ndarray:
    return text_column([("" if v != v else f"{v:.{decimals}f}") for v in values.tolist()])


def _digits(n: np.ndarray, keep_zeros: bool = False) -> np.ndarray:
    """(m, width) uint8: the decimal digits of non-negative integers, right-aligned; leading
    zeros NUL unless ``keep_zeros`` (the last digit always kept)."""
    top = int(n.max(initial=0))
    width = len(str(top))
    rest = n.astype(np.int32 if top < 2**31 else np.int64)
    out = np.empty((width, n.size), dtype=np.uint8)  # digit-major: contiguous rows
    for k in range(width - 1, -1, -1):
        q = rest // 10
        out[k] = rest - q * 10 + ord("0")
        rest = q
    if not keep_zeros and width > 1:
        started = np.maximum.accumulate(out[:-1] != ord("0"), axis=0)
        out[:-1][~started] = _PAD
    return out.T


def number_column(values, decimals: int) -> np.ndarray:
    """(m, width) uint8 matrix of the ASCII text of ``values`` with ``decimals`` decimals."""
    v = np.asarray(values, dtype=float).ravel()
    m = v.size
    nan = ~np.isfinite(v)
    a = np.where(nan, 0.0, np.abs(v))
    scale = 10.0 ** decimals
    if m and float(a.max(initial=0.0)) * scale >= _EXACT_LIMIT:
        return _fallback(v, decimals)
    n = np.round(a * scale).astype(np.int64)
    negative = (v < 0) & (n > 0) & ~nan
    ip, fp = np.divmod(n, np.int64(10 ** decimals))
    cols = [np.where(negative, ord("-"), _PAD).astype(np.uint8)[:, None], _digits(ip)]
    if decimals > 0:
        # the fraction with its leading zeros: digits of 10**d + fp, first digit dropped
        cols.append(np.full((m, 1), ord("."), dtype=np.uint8))
        cols.append(_digits(fp + np.int64(10 ** decimals), keep_zeros=True)[:, 1:decimals + 1])
    out = np.hstack(cols)
    out[nan, :] = _PAD
    return out


def text_column(texts) -> np.ndarray:
    """(m, width) uint8 matrix of UTF-8 ``texts`` (which must hold no NUL character)."""
    encoded = [t.encode("utf-8") for t in texts]
    width = max((len(b) for b in encoded), default=0)
    if width == 0:
        return np.zeros((len(encoded), 0), dtype=np.uint8)
    arr = np.array(encoded, dtype=f"S{width}")
    return arr.view(np.uint8).reshape(len(encoded), width)


def join_columns(columns, separator: str = ",") -> list[str]:
    """The rows of side-by-side byte matrices, joined with ``separator``, as strings."""
    if not columns:
        return []
    m = columns[0].shape[0]
    sep = np.frombuffer(separator.encode("ascii"), dtype=np.uint8)
    width = sum(c.shape[1] for c in columns) + sep.size * (len(columns) - 1) + 1
    block = np.zeros((m, width), dtype=np.uint8)
    at = 0
    for i, c in enumerate(columns):
        if i:
            block[:, at:at + sep.size] = sep
            at += sep.size
        block[:, at:at + c.shape[1]] = c
        at += c.shape[1]
    block[:, at] = ord("\n")
    text = block[block != _PAD].tobytes().decode("utf-8")
    return text.split("\n")[:-1]
