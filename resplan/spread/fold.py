r"""The forward budget's folded noise integrals for many transfer tables at once, on fewer points.

:func:`resplan.chain.budget.forward_budget` integrates every source's power transfer
through the digital filter with the alias images folded
(:mod:`resplan.noise.bandwidth`): a sum over the base grid, over each exact image
:math:`m f_s \mp u`, and over the far images by their period mean, each point
weighted by :math:`|H_d|^2\,\Delta f` (and :math:`1/f` for the flicker kernel).
The transfer between the table's points (:class:`resplan.chain.netlists.TransferTable`)
is :math:`g(x) = \exp P(x)`, with :math:`x` the table coordinate
:math:`\ln f` in table steps and :math:`P` the four-point Lagrange cubic of the
stencil that holds :math:`x`.

Here the same sums are taken for a stack of tables (one per Monte Carlo trial, or per
changed design) with the weights, points and images of the forward budget, but each
group of points that share one stencil is replaced by a few nodes: within a stencil
:math:`g` is an entire function of :math:`x`, and the :math:`Q + 1` Chebyshev nodes
of the group's span, with weights :math:`W_j = \sum_p c_p\,\ell_j(x_p)` (the Lagrange
basis of the nodes at each point, :math:`c_p` the point's weight), integrate every
polynomial of degree :math:`Q` in :math:`x` exactly; the error is that of the
interpolating polynomial of :math:`g` (L. N. Trefethen, *Approximation Theory and
Approximation Practice*, SIAM 2013, ch. 8, from memory). A group is compressed only
when its nodes reproduce the sum of every validation table (and of the same tables
made 1.5 times as steep, in ln) to 1e-14 relative; otherwise its points are kept.
An alias image of a narrow digital pass band falls into one or two stencils, so an
image's thousands of points become a few dozen nodes. Images are folded exactly per
table and stop at the first image under 1e-10 of the running total, per table, as the
forward budget does; the far part runs on the forward budget's own points.

This module imports numpy only.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from ..chain.netlists import TransferTable
from ..noise import bandwidth as _bw
from ..noise.bandwidth import DigitalPath

__all__ = ["FoldRules", "fold_tables", "table_order", "COMPRESSION_TOLERANCE"]

#: Relative agreement a compressed group must reach on every validation table.
COMPRESSION_TOLERANCE = 1e-14
#: Polynomial degrees tried for a group, smallest first.
_DEGREES = (3, 6, 10)
#: A validation table is also taken this much steeper (in ln), so that trials whose
#: transfers fall faster than the validation tables' are still integrated to tolerance.
_STEEPER = 1.5


def table_order(final_slope: np.ndarray, live: np.ndarray) -> int:
    """The rolloff order a table's noise integral uses (as ``TransferTable.rolloff_order``)."""
    slopes = final_slope[live]
    if slopes.size == 0:
        return 1
    return max(1, int(math.floor(-float(slopes.max()) / 2.0 + 1e-6)))


def _stack(log_f0: float, step: float, log_power: np.ndarray) -> TransferTable:
    rows = log_power.shape[0]
    return TransferTable(
        log_f0, step, log_power, np.zeros(rows), np.ones(rows, bool), math.inf, math.inf
    )


@dataclass
class _Block:
    frequency_hz: np.ndarray
    white: np.ndarray
    flicker: np.ndarray
    _stencil: tuple | None = None

    def stencil(self, log_f0: float, step: float, n: int) -> tuple[np.ndarray, np.ndarray]:
        """Table rows and coefficients (4, Q) of ln|H|² at the points, as
        TransferTable.power_gain interpolates (four-point Lagrange; the last slope above)."""
        if self._stencil is None:
            f = self.frequency_hz
            x = (np.log(np.maximum(f, math.exp(log_f0))) - log_f0) / step
            start = np.clip(np.floor(x).astype(np.intp) - 1, 0, n - 4)
            tau = x - start
            above = x > n - 1
            tau = np.where(above, 2.0, tau)
            coef = np.array(
                [
                    -(tau - 1) * (tau - 2) * (tau - 3) / 6,
                    tau * (tau - 2) * (tau - 3) / 2,
                    -tau * (tau - 1) * (tau - 3) / 2,
                    tau * (tau - 1) * (tau - 2) / 6,
                ]
            )
            idx = start[None, :] + np.arange(4)[:, None]
            if np.any(above):
                d = x[above] - (n - 1)
                idx[:, above] = np.array([n - 2, n - 1, n - 1, n - 1])[:, None]
                coef[:, above] = np.array([-d, 1.0 + d, 0.0 * d, 0.0 * d])
            self._stencil = (idx, coef)
        return self._stencil


def _gain(log_power_t: np.ndarray, block: _Block, log_f0: float, step: float) -> np.ndarray:
    """|H|² (Q, R) at a block's points from ln|H|² stored frequency-major (N, R)."""
    idx, coef = block.stencil(log_f0, step, log_power_t.shape[0])
    acc = log_power_t[idx[0]] * coef[0][:, None]
    for i in (1, 2, 3):
        acc += log_power_t[idx[i]] * coef[i][:, None]
    return np.exp(acc, out=acc)


@dataclass
class FoldRules:
    """Quadrature of the forward budget's fold on one table lattice and one digital path.

    Parameters
    ----------
    digital : DigitalPath
        The chain's digital filtering.
    f_low_hz : float
        Lower band edge, Hz.
    grid_points : int
        The forward budget's ``grid_points``.
    log_f0, step : float
        The tables' first ln f and step.
    size : int
        Points of the tables (the same for every table folded with these rules).
    validation : ndarray, shape (R, size)
        ln|H|² rows a compressed group must integrate to :data:`COMPRESSION_TOLERANCE`.
    """

    digital: DigitalPath
    f_low_hz: float
    grid_points: int
    log_f0: float
    step: float
    size: int
    validation: np.ndarray
    _blocks: dict = field(default_factory=dict, repr=False)

    def __post_init__(self) -> None:
        mid, width, gain = _bw._cached_base_grid(self.digital, self.f_low_hz, self.grid_points)
        self._mid = mid
        self._weight = gain * width
        self.fs = self.digital.sample_rate_hz
        self.mean_gain = (2.0 / self.fs) * (float(np.sum(self._weight)) + self.f_low_hz)
        steep = self.validation * _STEEPER
        self._check = _stack(self.log_f0, self.step, np.concatenate([self.validation, steep]))
        g = self._check.power_gain(mid)
        self._row_scale = (np.abs(g @ self._weight), np.abs(g @ (self._weight / mid)))

    @property
    def points(self) -> int:
        """Points of the rules built so far (for the benchmarks)."""
        return sum(b.frequency_hz.size for k, b in self._blocks.items() if k[0] != "far")

    def block(self, m: int, sign: int) -> _Block:
        """The rule of image ``m`` (``sign`` −1: m·f_s − u, +1: m·f_s + u; m = 0 the base)."""
        key = (m, sign if m else 0)
        if key not in self._blocks:
            self.prepare(max(m, 1) + m)  # the next images too: one pass builds them all
        return self._blocks[key]

    def far(self, start: float, top: float, points: int) -> _Block:
        """The far images' analog integral from ``start`` to ``top`` on the forward budget's
        points (midpoints of a geometric grid; the top itself last, for the power-law tail)."""
        key = ("far", start, top, points)
        found = self._blocks.get(key)
        if found is None:
            if points:
                edges = np.geomspace(start, top, points + 1)
                mid = 0.5 * (edges[1:] + edges[:-1])
                width = np.diff(edges)
                found = _Block(np.r_[mid, top], width, width / mid)
            else:
                found = _Block(np.array([start]), np.ones(1), np.ones(1))
            if len(self._blocks) > 4096:  # far blocks of many distinct trials: keep it bounded
                self._blocks = {k: v for k, v in self._blocks.items() if k[0] != "far"}
            self._blocks[key] = found
        return found

    def prepare(self, images: int) -> None:
        """Build the rules of the base grid and of images 1 … ``images`` (both sides) at once."""
        keys = [(0, 0)] + [(m, s) for m in range(1, images + 1) for s in (-1, 1)]
        keys = [k for k in keys if k not in self._blocks]
        if not keys:
            return
        mid = self._mid
        f = np.concatenate(
            [
                mid if m == 0 else (m * self.fs - mid if s < 0 else m * self.fs + mid)
                for m, s in keys
            ]
        )
        block = np.repeat(np.arange(len(keys)), mid.size)
        weight = np.tile(self._weight, len(keys))
        for k, rule in zip(keys, self._compress(f, weight, block, len(keys)), strict=True):
            self._blocks[k] = rule

    def _coordinates(self, f: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Table coordinate x and a stencil key per point (as TransferTable.power_gain)."""
        x = (np.log(np.maximum(f, math.exp(self.log_f0))) - self.log_f0) / self.step
        n = self.size
        start = np.clip(np.floor(x).astype(np.intp) - 1, 0, n - 4)
        return x, np.where(x > n - 1, n, start)

    def _compress(
        self, f: np.ndarray, weight: np.ndarray, block: np.ndarray, blocks: int
    ) -> list[_Block]:
        """Each block's points with every group of one stencil replaced by nodes, if they pass."""
        cw = weight
        cf = weight / f
        x, stencil = self._coordinates(f)
        key = block * (self.size + 1) + stencil
        order = np.argsort(key, kind="stable")
        x, f, cw, cf, key, block = (
            x[order],
            f[order],
            cw[order],
            cf[order],
            key[order],
            block[order],
        )
        starts = np.flatnonzero(np.r_[True, key[1:] != key[:-1]])
        counts = np.diff(np.r_[starts, key.size])
        group_block = block[starts]
        lo = np.minimum.reduceat(x, starts)
        hi = np.maximum.reduceat(x, starts)
        group_of = np.repeat(np.arange(starts.size), counts)
        accepted = np.zeros(starts.size, bool)
        found: list[tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]] = []
        # A group on one x (points below the table, clamped) is one node, exactly.
        flat = hi - lo <= 1e-12 * np.maximum(1.0, np.abs(hi))
        if np.any(flat):
            idx = np.flatnonzero(flat)
            found.append(
                (
                    group_block[idx],
                    f[starts[idx]],
                    np.add.reduceat(cw, starts)[idx],
                    np.add.reduceat(cf, starts)[idx],
                )
            )
            accepted |= flat
        candidate = ~accepted & (counts > _DEGREES[0] + 2)
        if np.any(candidate):
            # Direct sums of the validation tables over every candidate group.
            pts = np.flatnonzero(candidate[group_of])
            sub_starts = np.r_[0, np.cumsum(counts[candidate])[:-1]]
            g_points = self._check.power_gain(f[pts])  # (V, P')
            direct_w = np.add.reduceat(g_points * cw[pts], sub_starts, axis=1)
            direct_f = np.add.reduceat(g_points * cf[pts], sub_starts, axis=1)
            where = np.full(starts.size, -1)
            where[candidate] = np.arange(int(candidate.sum()))
            # Each validation row's integral over the base grid: a lower bound on its whole
            # integral, below which an error of 1e-15 of it does not matter.
            scale_w = np.broadcast_to(self._row_scale[0][:, None], (direct_w.shape[0], blocks))
            scale_f = np.broadcast_to(self._row_scale[1][:, None], (direct_w.shape[0], blocks))
            for q in _DEGREES:
                groups = np.flatnonzero(~accepted & (counts > q + 2))
                if groups.size == 0:
                    continue
                nodes_x, wts_w, wts_f = self._nodes(x, cw, cf, group_of, counts, lo, hi, groups, q)
                nodes_f = np.exp(self.log_f0 + self.step * nodes_x)  # (g, q+1)
                g_nodes = self._check.power_gain(nodes_f.ravel()).reshape(-1, groups.size, q + 1)
                comp_w = np.einsum("vgj,gj->vg", g_nodes, wts_w)
                comp_f = np.einsum("vgj,gj->vg", g_nodes, wts_f)
                dw, df = direct_w[:, where[groups]], direct_f[:, where[groups]]
                sw, sf = scale_w[:, group_block[groups]], scale_f[:, group_block[groups]]
                ok_w = np.abs(comp_w - dw) <= COMPRESSION_TOLERANCE * np.abs(dw) + 1e-15 * sw
                ok_f = np.abs(comp_f - df) <= COMPRESSION_TOLERANCE * np.abs(df) + 1e-15 * sf
                good = np.all(ok_w & ok_f, axis=0)
                if np.any(good):
                    found.append(
                        (
                            np.repeat(group_block[groups[good]], q + 1),
                            nodes_f[good].ravel(),
                            wts_w[good].ravel(),
                            wts_f[good].ravel(),
                        )
                    )
                    accepted[groups[good]] = True
        keep = ~accepted[group_of]
        found.append((block[keep], f[keep], cw[keep], cf[keep]))
        owner = np.concatenate([b for b, *_ in found])
        columns = [np.concatenate([c[i] for c in found]) for i in (1, 2, 3)]
        by_block = np.argsort(owner, kind="stable")
        edges = np.searchsorted(owner[by_block], np.arange(blocks + 1))
        out = []
        for k in range(blocks):
            sel = by_block[edges[k] : edges[k + 1]]
            out.append(_Block(columns[0][sel], columns[1][sel], columns[2][sel]))
        return out

    @staticmethod
    def _nodes(x, cw, cf, group_of, counts, lo, hi, groups, q):
        """Chebyshev nodes of each group's span and the weights that carry its points."""
        j = np.arange(q + 1)
        theta = (2 * j + 1) * math.pi / (2 * (q + 1))
        t = np.cos(theta)
        lam = (-1.0) ** j * np.sin(theta)  # barycentric weights, first kind
        centre = 0.5 * (lo[groups] + hi[groups])
        half = 0.5 * (hi[groups] - lo[groups])
        nodes = centre[:, None] + half[:, None] * t[None, :]  # (g, q+1)
        local = np.full(counts.size, -1)
        local[groups] = np.arange(groups.size)
        member = np.flatnonzero(local[group_of] >= 0)  # points sorted by group
        owner = local[group_of[member]]
        d = x[member, None] - nodes[owner]  # (P', q+1)
        hit = d == 0.0
        with np.errstate(divide="ignore", invalid="ignore"):
            terms = lam[None, :] / d
            basis = terms / terms.sum(axis=1, keepdims=True)
        rows_hit = np.any(hit, axis=1)
        if np.any(rows_hit):
            basis[rows_hit] = hit[rows_hit].astype(float)
        first = np.r_[0, np.cumsum(counts[groups])[:-1]]
        wts_w = np.add.reduceat(basis * cw[member, None], first, axis=0)
        wts_f = np.add.reduceat(basis * cf[member, None], first, axis=0)
        return nodes, wts_w, wts_f


def fold_tables(
    rules: FoldRules,
    log_power: np.ndarray,
    owner: np.ndarray,
    top_hz: np.ndarray,
    order: np.ndarray,
) -> tuple[np.ndarray, np.ndarray]:
    """White and flicker noise bandwidths of every row of a stack of tables.

    Parameters
    ----------
    rules : FoldRules
        Built on the lattice of these tables.
    log_power : ndarray, shape (R, size)
        ln|H|² rows (V²/V² or V²/A²) on the lattice.
    owner : ndarray of int, shape (R,)
        Which table (trial) each row belongs to: images stop per table.
    top_hz : ndarray, shape (R,)
        Top of each row's analog integral, Hz: 1000 × its table's settled frequency.
    order : ndarray of int, shape (R,)
        Its table's rolloff order.

    Returns
    -------
    white, flicker : ndarray, shape (R,)
        ∫|H|²|H_d|² df (Hz·|H|²) and ∫|H|²|H_d|²/f df, as ``_path_bandwidths`` gives them.
    """
    lpt = np.ascontiguousarray(log_power.T)  # frequency-major: a stencil gathers whole rows
    f0, step = rules.log_f0, rules.step
    fs = rules.fs
    rows_all = log_power.shape[0]
    base = rules.block(0, 0)
    g = _gain(lpt, base, f0, step)
    total_w = base.white @ g
    total_f = base.flicker @ g
    images = np.minimum(np.ceil(top_hz / fs), 4 * order + 8).astype(int)
    done = images.copy()
    active = images >= 1
    if np.any(active):
        rules.prepare(min(int(images.max()), 4))
    n_owner = int(owner.max()) + 1 if rows_all else 0
    m = 1
    rows = np.arange(rows_all)
    sub = lpt
    while np.any(active):
        if not np.array_equal(rows, np.flatnonzero(active)):
            rows = np.flatnonzero(active)
            sub = np.ascontiguousarray(lpt[:, rows])
        iw = 0.0
        if_ = 0.0
        for sign in (-1, 1):
            b = rules.block(m, sign)
            g = _gain(sub, b, f0, step)
            iw = iw + b.white @ g
            if_ = if_ + b.flicker @ g
        total_w[rows] = total_w[rows] + iw
        total_f[rows] = total_f[rows] + if_
        small = (iw <= _bw._NEGLIGIBLE_IMAGE * np.abs(total_w[rows])) & (
            if_ <= _bw._NEGLIGIBLE_IMAGE * np.abs(total_f[rows])
        )
        loud = np.bincount(owner[rows][~small], minlength=n_owner)
        broke = loud[owner[rows]] == 0
        done[rows[broke]] = m
        active[rows[broke]] = False
        active[rows[images[rows] <= m]] = False
        m += 1
    far_w = np.empty(rows_all)
    far_f = np.empty(rows_all)
    start = (done + 0.5) * fs
    points = max(200, rules.grid_points // 4)
    keys = np.stack([start, top_hz, order.astype(float)], axis=1)
    unique, inverse = np.unique(keys, axis=0, return_inverse=True)
    for k, (s, top, o) in enumerate(unique):
        rows = np.flatnonzero(inverse.ravel() == k)
        sub = lpt if rows.size == rows_all else np.ascontiguousarray(lpt[:, rows])
        if s < top:
            far = rules.far(s, top, points)
            g = _gain(sub, far, f0, step)
            tail = top / (2 * int(o) - 1)
            far_w[rows] = far.white @ g[:-1] + g[-1] * tail
            far_f[rows] = far.flicker @ g[:-1] + (g[-1] / top) * tail
        else:
            at = _gain(sub, rules.far(s, s, 0), f0, step)[0]
            tail = s / (2 * int(o) - 1)
            far_w[rows] = at * tail
            far_f[rows] = (at / s) * tail
    return total_w + rules.mean_gain * far_w, total_f + rules.mean_gain * far_f
