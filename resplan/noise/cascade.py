r"""Block-tridiagonal solve of a modified nodal pencil, batched over frequency: a cascade.

A signal chain is a cascade: each stage touches only the one before it and the one
after it. Grouped by the level structure of a breadth-first search of the matrix
graph (Cuthill and McKee 1969), the unknowns fall into levels such that an unknown
couples only to its own level and the two next to it, so

.. math:: A(s) = G^\mathsf{T} + sC^\mathsf{T}

is block tridiagonal with small blocks. Block Gaussian elimination (the block
Thomas algorithm; Golub & Van Loan, *Matrix Computations*, 4th ed., §4.5.1, from
memory) then costs O(k·b³) per frequency for k levels of at most b unknowns: linear
in the number of stages, where a dense LU costs O(n³). Every frequency is handled at
once by numpy; only the walk along the levels is a Python loop.

No pivoting crosses blocks, so the solution is checked, refined once with the same
factors where any frequency needs it (Wilkinson 1963; Higham, *Accuracy and Stability
of Numerical Algorithms*, 2nd ed., ch. 12, from memory) and checked again: a frequency
whose normwise backward error
‖r − Ay‖∞ / (‖A‖∞‖y‖∞ + ‖r‖∞) is above :data:`RESIDUAL_TOLERANCE`, or whose solution
is not finite, is handed back to the caller, which solves it densely.

References
----------
- E. Cuthill, J. McKee, "Reducing the bandwidth of sparse symmetric matrices",
  Proc. 24th ACM National Conference (1969) 157–172.
- N. E. Gibbs, W. G. Poole, P. K. Stockmeyer, "An algorithm for reducing the bandwidth
  and profile of a sparse matrix", SIAM J. Numer. Anal. 13 (1976) 236–250.

This module imports numpy only.
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np

__all__ = [
    "BlockPlan",
    "plan_blocks",
    "solve_blocks",
    "solve_cascade",
    "CASCADE_UNKNOWNS",
    "RESIDUAL_TOLERANCE",
]

#: Systems of at least this many unknowns are tried as a cascade; smaller ones (every
#: single stage) keep the dense LU, whose cost is then negligible.
CASCADE_UNKNOWNS = 48

#: A block plan is used only when its largest level is at most this share of n.
_MAX_BLOCK_SHARE = 0.25
#: Normwise backward error above which a frequency is solved again densely.
RESIDUAL_TOLERANCE = 1e-12
#: Complex entries of one stack of blocks per frequency chunk (2**21 entries = 32 MiB, a
#: ladder of 1,000 stages on its whole table; about six such stacks are alive at once).
_CHUNK_ENTRIES = 2**21


class BlockPlan:
    """The unknowns of a pencil grouped in levels, and its blocks padded to one size.

    Attributes
    ----------
    levels : list of ndarray of int
        Unknown indices of each level, in elimination order.
    size : int
        Largest level, b; smaller levels are padded with identity rows.
    index : ndarray of int, shape (k, b)
        Unknown of each padded slot (n for a padding slot).
    diagonal, lower, upper : tuple of ndarray, shape (k, b, b)
        Real and per-s parts of A[i, i], A[i, i−1] and A[i, i+1].
    row_norm_real, row_norm_per_s : ndarray, shape (n,)
        Row sums of |a_real| and |a_per_s|: ‖A(s)‖∞ ≤ max(real + |s|·per_s).
    """

    def __init__(self, levels: list[np.ndarray], a_real: np.ndarray, a_per_s: np.ndarray):
        n = a_real.shape[0]
        k = len(levels)
        b = max(level.size for level in levels)
        self.levels = levels
        self.size = b
        self.unknowns = n
        index = np.full((k, b), n, dtype=np.intp)
        for i, level in enumerate(levels):
            index[i, : level.size] = level
        self.index = index
        pad_real = np.zeros((n + 1, n + 1))
        pad_real[:n, :n] = a_real
        pad_per_s = np.zeros((n + 1, n + 1))
        pad_per_s[:n, :n] = a_per_s
        rows = index[:, :, None]

        def coupling(shift: int) -> tuple[np.ndarray, np.ndarray]:
            cols = np.roll(index, -shift, axis=0)[:, None, :]
            if shift == 1:
                cols = np.where(np.arange(k)[:, None, None] == k - 1, n, cols)
            elif shift == -1:
                cols = np.where(np.arange(k)[:, None, None] == 0, n, cols)
            return pad_real[rows, cols], pad_per_s[rows, cols]

        d_real, d_per_s = coupling(0)
        padding = index == n
        d_real[padding] = 0.0
        d_real[np.nonzero(padding)[0], np.nonzero(padding)[1], np.nonzero(padding)[1]] = 1.0
        self.diagonal = (d_real, d_per_s)
        self.lower = coupling(-1)
        self.upper = coupling(1)
        self.row_norm_real = np.abs(a_real).sum(axis=1)
        self.row_norm_per_s = np.abs(a_per_s).sum(axis=1)


def _levels(adjacent: list[list[int]], start: int, seen: set[int]) -> list[list[int]]:
    """Breadth-first levels from ``start`` over its connected piece (marks ``seen``)."""
    seen.add(start)
    levels = [[start]]
    while True:
        nxt = []
        for u in levels[-1]:
            for v in adjacent[u]:
                if v not in seen:
                    seen.add(v)
                    nxt.append(v)
        if not nxt:
            return levels
        levels.append(nxt)


def _piece_levels(adjacent: list[list[int]]) -> list[list[int]]:
    """Levels of every connected piece, from a pseudo-peripheral start, side by side.

    Pieces share no edge, so level l of one piece may sit with level l of another.
    """
    seen: set[int] = set()
    merged: list[list[int]] = []
    for first in range(len(adjacent)):
        if first in seen:
            continue
        far = _levels(adjacent, first, set())[-1][0]
        for depth, level in enumerate(_levels(adjacent, far, seen)):
            if depth == len(merged):
                merged.append([])
            merged[depth] += level
    return merged


def plan_blocks(a_real: np.ndarray, a_per_s: np.ndarray) -> BlockPlan | None:
    """Levels of the pencil a_real + s·a_per_s (n × n), or None when it has no narrow
    block-tridiagonal form (a small or densely coupled circuit).

    The levels are those of a breadth-first search from a pseudo-peripheral unknown
    (the last one reached by a first search; Gibbs, Poole and Stockmeyer 1976). Pieces
    not connected to each other (the legs of a differential ladder joined only through
    ground) are searched one by one and their levels laid side by side.
    """
    n = a_real.shape[0]
    pattern = (a_real != 0) | (a_per_s != 0)
    pattern = pattern | pattern.T
    np.fill_diagonal(pattern, False)
    rows, cols = np.nonzero(pattern)
    adjacent: list[list[int]] = [[] for _ in range(n)]
    for r, c in zip(rows.tolist(), cols.tolist(), strict=True):
        adjacent[r].append(c)
    levels = _piece_levels(adjacent)
    if max(len(level) for level in levels) > _MAX_BLOCK_SHARE * n:
        return None
    return BlockPlan([np.array(sorted(x), dtype=np.intp) for x in levels], a_real, a_per_s)


def solve_blocks(plan: BlockPlan, s: np.ndarray, rhs: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Solve (a_real + s·a_per_s) y = rhs for every s by block elimination.

    Parameters
    ----------
    plan : BlockPlan
        From :func:`plan_blocks`.
    s : ndarray, shape (F,), complex
        The complex frequencies 2πjf, rad/s.
    rhs : ndarray, shape (n,)
        Right-hand side.

    Returns
    -------
    y : ndarray, shape (F, n), complex
        The solution; rows flagged in ``failed`` are not to be used.
    failed : ndarray of bool, shape (F,)
        Frequencies whose backward error is above the tolerance or whose solution is
        not finite (a singular or nearly singular block).
    """
    n, b = plan.unknowns, plan.size
    k = len(plan.levels)
    chunk = max(1, _CHUNK_ENTRIES // max(1, k * b * b))
    padded = np.zeros(n + 1, dtype=complex)
    padded[:n] = rhs
    r = padded[plan.index][:, None, :, None]  # (k, 1, b, 1)
    y = np.zeros((s.size, n + 1), dtype=complex)
    failed = np.zeros(s.size, dtype=bool)
    slots = plan.index.reshape(-1)
    with np.errstate(all="ignore"):  # a zero pivot shows as a non-finite or large residual
        for start in range(0, s.size, chunk):
            part = slice(start, start + chunk)
            here = s[part]
            lower, upper = _at(plan.lower, here), _at(plan.upper, here)
            diagonal = _at(plan.diagonal, here)
            diagonal = np.broadcast_to(diagonal, (k, here.size, b, b))
            if b == 1:  # a ladder: scalar recurrences on contiguous rows
                blocks = (lower[..., 0, 0], diagonal[..., 0, 0].copy(), upper[..., 0, 0])
                r1 = r[..., 0, 0]
                lu = _factor_scalar(blocks)
                x = _substitute_scalar(blocks, lu, r1)
                left = _residual(blocks, r1, x)
                good = _accepted(plan, here, rhs, x[..., None], left[..., None])
                if not good.all():
                    x = x + _substitute_scalar(blocks, lu, left)
                    left = _residual(blocks, r1, x)
                    good = _accepted(plan, here, rhs, x[..., None], left[..., None])
                x = x[..., None]
            else:
                blocks = (lower, diagonal.copy(), upper)
                lu = _factor(blocks)
                x = _substitute(blocks, lu, np.broadcast_to(r, (k, here.size, b, 1)))
                left = _residual(blocks, r, x)
                good = _accepted(plan, here, rhs, x[..., 0], left[..., 0])
                if not good.all():
                    x = x + _substitute(blocks, lu, left)
                    left = _residual(blocks, r, x)
                    good = _accepted(plan, here, rhs, x[..., 0], left[..., 0])
                x = x[..., 0]
            failed[part] = ~good
            y[start : start + here.size, slots] = x.transpose(1, 0, 2).reshape(here.size, -1)
    return y[:, :n], failed


def solve_cascade(
    a_real: np.ndarray,
    a_per_s: np.ndarray,
    frequency_hz: np.ndarray,
    rhs: np.ndarray,
    dense: Callable[[np.ndarray], np.ndarray],
) -> np.ndarray | None:
    """y (n, F) of (a_real + 2πjf·a_per_s) y = rhs, or None when the pencil is no cascade.

    Frequencies the block elimination does not solve to :data:`RESIDUAL_TOLERANCE`
    are solved by ``dense`` (frequencies → y of shape (n, F')), which also names the
    parts of a singular circuit.
    """
    plan = plan_blocks(a_real, a_per_s)
    if plan is None:
        return None
    y, failed = solve_blocks(plan, 2j * np.pi * frequency_hz, rhs)
    if np.any(failed):
        y[failed] = dense(frequency_hz[failed]).T
    return y.T


def _accepted(plan: BlockPlan, s: np.ndarray, rhs: np.ndarray, x: np.ndarray, left) -> np.ndarray:
    """Per frequency: x (k, F, b) finite and its residual ``left`` (k, F, b) small."""
    # ‖A‖∞ ≤ max row sum of |a_real| + |s|·max row sum of |a_per_s| ≤ 2‖A‖∞.
    norm_a = plan.row_norm_real.max() + np.abs(s) * plan.row_norm_per_s.max()
    scale = norm_a * np.abs(x).max(axis=(0, 2)) + np.abs(rhs).max()
    finite = np.all(np.isfinite(x), axis=(0, 2))
    return finite & (np.abs(left).max(axis=(0, 2)) <= RESIDUAL_TOLERANCE * scale)


def _at(pair: tuple[np.ndarray, np.ndarray], s: np.ndarray) -> np.ndarray:
    """Blocks of the pencil at every s, level first: (k, F, b, b); (k, 1, b, b) when the
    blocks do not depend on s (the resistive couplings of a ladder)."""
    real, per_s = pair
    if not np.any(per_s):
        return real[:, None].astype(complex)
    return real[:, None] + s[None, :, None, None] * per_s[:, None]


def _mul(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Stacked matrix product; a plain product when the blocks are 1 × 1."""
    return a * b if a.shape[-1] == 1 else a @ b


def _inverse(m: np.ndarray) -> np.ndarray:
    """Inverses of a stack (F, b, b): closed forms for b ≤ 2 (Cramer's rule), else LU."""
    b = m.shape[-1]
    if b == 1:
        return 1.0 / m
    if b == 2:
        det = m[:, 0, 0] * m[:, 1, 1] - m[:, 0, 1] * m[:, 1, 0]
        out = np.empty_like(m)
        out[:, 0, 0], out[:, 0, 1] = m[:, 1, 1] / det, -m[:, 0, 1] / det
        out[:, 1, 0], out[:, 1, 1] = -m[:, 1, 0] / det, m[:, 0, 0] / det
        return out
    try:
        return np.linalg.inv(m)
    except np.linalg.LinAlgError:
        return np.full_like(m, np.nan)


def _factor(blocks: tuple[np.ndarray, np.ndarray, np.ndarray]):
    """Block LU without pivoting between blocks: every D'_i⁻¹ and D'_i⁻¹·A[i, i+1]."""
    lower, diagonal, upper = blocks
    k, f = diagonal.shape[:2]
    inverses = np.empty_like(diagonal)
    factors = np.empty((k, f) + upper.shape[2:], dtype=complex)
    for i in range(k):
        pivot = diagonal[i] - _mul(lower[i], factors[i - 1]) if i else diagonal[i]
        inverses[i] = _inverse(pivot)
        factors[i] = _mul(inverses[i], upper[i])
    return inverses, factors


def _factor_scalar(blocks: tuple[np.ndarray, np.ndarray, np.ndarray]):
    """:func:`_factor` for 1 × 1 blocks, (k, F) arrays: the Thomas algorithm."""
    lower, diagonal, upper = blocks
    inverses = np.empty_like(diagonal)
    factors = np.empty_like(diagonal)
    inverses[0] = 1.0 / diagonal[0]
    factors[0] = inverses[0] * upper[0]
    for i in range(1, diagonal.shape[0]):
        inverses[i] = 1.0 / (diagonal[i] - lower[i] * factors[i - 1])
        factors[i] = inverses[i] * upper[i]
    return inverses, factors


def _substitute_scalar(blocks, lu, r: np.ndarray) -> np.ndarray:
    """:func:`_substitute` for 1 × 1 blocks, (k, F) arrays."""
    lower = blocks[0]
    inverses, factors = lu
    out = np.empty(inverses.shape, dtype=complex)
    out[0] = inverses[0] * r[0]
    for i in range(1, out.shape[0]):
        out[i] = inverses[i] * (r[i] - lower[i] * out[i - 1])
    for i in range(out.shape[0] - 2, -1, -1):
        out[i] -= factors[i] * out[i + 1]
    return out


def _substitute(blocks, lu, r: np.ndarray) -> np.ndarray:
    """Solve with the block factors for right-hand columns r (k, F, b, 1); same shape out."""
    lower = blocks[0]
    inverses, factors = lu
    k = r.shape[0]
    reduced = np.empty(inverses.shape[:3] + (1,), dtype=complex)
    reduced[0] = _mul(inverses[0], r[0])
    for i in range(1, k):
        reduced[i] = _mul(inverses[i], r[i] - _mul(lower[i], reduced[i - 1]))
    for i in range(k - 2, -1, -1):
        reduced[i] -= _mul(factors[i], reduced[i + 1])
    return reduced


def _residual(blocks, r: np.ndarray, x: np.ndarray) -> np.ndarray:
    """r − A·x for every level at once: columns (k, F, b, 1), or (k, F) for 1 × 1 blocks."""
    lower, diagonal, upper = blocks
    mul = np.multiply if x.ndim == 2 else _mul
    out = r - mul(diagonal, x)
    out[1:] -= mul(lower[1:], x[:-1])
    out[:-1] -= mul(upper[:-1], x[1:])
    return out
