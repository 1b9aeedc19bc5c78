r"""Monte Carlo trials solved exactly, many at once: the circuit of every trial, batched.

A trial's budget differs from the typical one where its spreads move the analog
front end: part values (R, C, an op amp's gain and GBW) and noise densities. Here
the front end of a chunk of trials is solved at once and integrated as the forward
budget integrates it; everything else (the ADC's and the reference's noise, the
span, the gain) is taken from the factor model (:mod:`.model`), whose laws are exact
for those figures, and checked below.

1. **Part values per trial.** Each segment's modified nodal matrices are
   :math:`G + sC` stamped from part values (Ho, Ruehli, Brennan 1975). Every
   stamp value (1/R, C, 1/A₀, 1/(2π·GBW)) and every source's density² and corner is
   found as a product of one law per spread figure (power, affine or quadratic,
   found from the design rebuilt at three points of each spread, as
   :func:`.model.build_model` finds its laws); a value no law fits leaves the trials
   to full budgets.
2. **The solve.** A trial's matrix is the typical one plus one rank-one stamp per
   moved part, :math:`A_t = A_0 + \sum_p \Delta_p\, a_p b_p^\mathsf{T}`, so the
   adjoint solve :math:`A_t^\mathsf{T} y = e` is the typical solution corrected by
   the Sherman–Morrison–Woodbury identity (G. H. Golub, C. F. Van Loan, *Matrix
   Computations*, 4th ed., §2.1.4, from memory): with :math:`y_0 = A_0^{-T}e`,
   :math:`Z = A_0^{-T}B`, :math:`K = A^\mathsf{T}Z`,

   .. math:: y = y_0 - Z\,(I + DK)^{-1} D\,A^\mathsf{T} y_0 ,

   an r × r solve per trial and frequency (r moved parts) instead of an n × n one.
   The typical solves are done once per table lattice.
3. **The table** of ln|H|² per trial on the forward budget's lattice (its top set
   by the trial's own part values), its final slopes, live rows and settled
   frequency, as :func:`resplan.chain.netlists.transfer_table` makes them.
4. **The fold** of :mod:`.fold`: the forward budget's points and images, fewer
   nodes, images stopped per trial.

:class:`ExactTrials` checks itself at build against full budgets
(:func:`.model.exact_budget`) at a few trials and keeps the largest relative
deviation of any contribution; tests/test_spread_exact.py holds it to 1e-9.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..chain.netlists import (
    POINTS_PER_DECADE,
    ChainCircuit,
    circuit_of,
)
from ..errors import ResplanError
from ..noise.netlist import Capacitor, CurrentSource, OpAmp, Resistor
from ..noise.nodal import build_mna
from ..units.formatting import format_percent
from .fold import FoldRules, fold_tables
from .model import Law, SpreadModel, _fit, _probe_points

__all__ = ["ExactTrials", "Unsupported", "exact_trials", "EXACT_CHUNK"]

#: Trials solved at once (memory: about F·(S + r)·16 B per trial, F ≈ 1,000 frequencies).
EXACT_CHUNK = 1024
#: Up to this many moved parts in one segment the r × r systems are eliminated by hand
#: (vectorised over trials and frequencies); above it numpy.linalg.solve takes them.
_ELIMINATION_MAX = 4
#: Trials per batch of the r × r solves (cache-sized).
_SOLVE_CHUNK = 32
#: Largest relative deviation from full budgets the batched path may show at its checks.
EXACT_TOLERANCE = 1e-9
_TINY = 1e-300
#: Same constants as the table builder (resplan.chain.netlists).
_TOP_FACTOR = 1e4


class Unsupported(Exception):
    """The batched path cannot reproduce this design's trials; full budgets are used."""


@dataclass(frozen=True)
class _Stamp:
    """A part's value entering one matrix as Δ·a·bᵀ (``matrix`` 0: G, 1: C)."""

    matrix: int
    a: np.ndarray
    b: np.ndarray


def _unit(n: int, index: dict, node: str, sign: float = 1.0) -> np.ndarray:
    v = np.zeros(n)
    i = index.get(node)
    if i is not None:
        v[i] = sign
    return v


def _stamps(seg) -> tuple[list[tuple[str, int, float]], list[_Stamp], object]:
    """The stamp values of a segment's parts: (part name, matrix, value) and their patterns."""
    mna = build_mna(seg.netlist)
    n = mna.size
    values, patterns = [], []
    for part in seg.netlist.parts:
        if isinstance(part, Resistor | Capacitor):
            u = _unit(n, mna.node_index, part.a) - _unit(n, mna.node_index, part.b)
            if isinstance(part, Resistor):
                values.append((part.name, 0, 1.0 / part.resistance_ohm))
                patterns.append(_Stamp(0, u, u))
            else:
                values.append((part.name, 1, part.capacitance_f))
                patterns.append(_Stamp(1, u, u))
        elif isinstance(part, OpAmp):
            k = mna.branch_index[part.name]
            a = np.zeros(n)
            a[k] = 1.0
            b = _unit(n, mna.node_index, part.output)
            g = 0.0 if math.isinf(part.dc_gain) else 1.0 / part.dc_gain
            c = 0.0 if math.isinf(part.gbw_hz) else 1.0 / (2.0 * math.pi * part.gbw_hz)
            values.append((part.name + ".g", 0, g))
            patterns.append(_Stamp(0, a, b))
            values.append((part.name + ".c", 1, c))
            patterns.append(_Stamp(1, a, b))
    return values, patterns, mna


def _structure(circuit: ChainCircuit) -> tuple:
    """What must not change between trials: parts, their nodes, sources and responses."""
    out = []
    for seg in circuit.segments:
        parts = []
        for p in seg.netlist.parts:
            nodes = tuple(
                getattr(p, k) for k in ("a", "b", "plus", "minus", "output") if hasattr(p, k)
            )
            parts.append((type(p).__name__, p.name, nodes))
        out.append((tuple(parts), seg.responses, tuple(s.source_id for s in seg.sources)))
    return tuple(out)


def _numbers(circuit: ChainCircuit) -> np.ndarray:
    """Every number the batched path reads: stamp values, then density² and corners."""
    stamp = [v for seg in circuit.segments for _, _, v in _stamps(seg)[0]]
    return np.concatenate([np.array(stamp, float), circuit.white_sq, circuit.corner_hz])


class _Segment:
    """One segment's typical solves and the patterns of its moved parts."""

    def __init__(self, seg, moved: np.ndarray, offset: int):
        values, patterns, mna = _stamps(seg)
        self.seg = seg
        self.mna = mna
        self.base = np.array([v for _, _, v in values])
        self.moved = np.flatnonzero(moved[offset : offset + len(values)])
        self.offset = offset
        self.size = len(values)
        self.patterns = [patterns[i] for i in self.moved]
        net = seg.netlist
        cols = [(s.kind, s.part, s.a, s.b) for s in net.noise_sources]
        part = net.part(net.signal_input) if net.signal_input is not None else None
        if isinstance(part, CurrentSource):
            cols.append(("current", part.name, part.a, part.b))
        elif part is not None:
            cols.append(("voltage", part.name, part.plus, part.minus))
        n = mna.size
        sel = np.zeros((len(cols), n))
        for j, (kind, name, a, b) in enumerate(cols):
            if kind == "voltage":
                sel[j, mna.branch_index[name]] = 1.0
            else:
                sel[j] += _unit(n, mna.node_index, b) - _unit(n, mna.node_index, a)
        self.select = sel
        self.sources = len(net.noise_sources)
        self.has_signal = part is not None
        self._solved: dict[int, tuple] = {}
        # Parts of the characteristic frequency (as Segment.characteristic_hz reads them).
        kinds = [(name, m) for name, m, _ in values]
        self.resistors = [
            i for i, (name, m) in enumerate(kinds) if m == 0 and not name.endswith(".g")
        ]
        self.capacitors = [
            i for i, (name, m) in enumerate(kinds) if m == 1 and not name.endswith(".c")
        ]
        self.gbws = [i for i, (name, _) in enumerate(kinds) if name.endswith(".c")]
        self.cutoffs = [r.cutoff_hz for r in seg.responses]

    def characteristic_hz(self, values: np.ndarray) -> np.ndarray:
        """Segment.characteristic_hz of every trial, from its stamp values (T, parts)."""
        t = values.shape[0]
        top = np.full(t, -np.inf)
        for c in self.cutoffs:
            top = np.maximum(top, c)
        for i in self.gbws:
            v = values[:, i]
            with np.errstate(divide="ignore"):
                gbw = np.where(v > 0, 1.0 / (2.0 * math.pi * v), -np.inf)
            top = np.maximum(top, gbw)
        if self.resistors and self.capacitors:
            r_min = np.min(1.0 / values[:, self.resistors], axis=1)
            c_min = np.min(values[:, self.capacitors], axis=1)
            top = np.maximum(top, len(self.capacitors) / (2.0 * math.pi * r_min * c_min))
        return np.where(np.isfinite(top), top, 1.0)

    def typical(self, f: np.ndarray, key: int) -> tuple:
        """y₀ and Z = A₀⁻ᵀB on the lattice, and the shape of the segment's responses."""
        found = self._solved.get(key)
        if found is None:
            g, c = self.mna.conductance, self.mna.capacitance
            n = self.mna.size
            e = self.mna.output_selector()
            rhs = (
                np.column_stack([e] + [p.b for p in self.patterns]) if self.patterns else e[:, None]
            )
            m = g.T[None] + (2j * np.pi * f)[:, None, None] * c.T[None]
            sol = np.linalg.solve(m, np.broadcast_to(rhs, (f.size, n, rhs.shape[1])))
            y0, z = sol[..., 0], sol[..., 1:]
            shape = np.ones(f.shape)
            for response in self.seg.responses:
                shape = shape * response.power_gain(f)
            a = np.array([p.a for p in self.patterns]).reshape(len(self.patterns), n)
            found = (
                self.select @ y0[..., None],  # (F, S+1, 1)
                self.select[None] @ z,  # (F, S+1, r)
                np.einsum("rn,fnk->frk", a, z),  # K (F, r, r)
                np.einsum("rn,fn->fr", a, y0),  # w (F, r)
                shape,
            )
            self._solved[key] = found
        return found

    def power(self, f: np.ndarray, key: int, values: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """|H_j|² (T, S, F) of every source to the segment output and |T|² (T, F)."""
        ty0, tz, k, w, shape = self.typical(f, key)
        t = values.shape[0]
        p2 = np.empty((t, ty0.shape[1], f.size))
        if self.moved.size == 0:
            p2[:] = (ty0[..., 0].real ** 2 + ty0[..., 0].imag ** 2).T[None]
        else:
            delta = values[:, self.moved] - self.base[self.moved]  # (T, r)
            s = 2j * np.pi * f
            r = self.moved.size
            scale = np.ones((f.size, r), complex)
            for j, p in enumerate(self.patterns):
                if p.matrix:
                    scale[:, j] = s
            if r > _ELIMINATION_MAX:
                self._power_lapack(p2, delta, scale, ty0, tz, k, w)
            else:
                self._power_elimination(p2, delta, scale, ty0, tz, k, w)
        noise = p2[:, : self.sources] * shape
        signal = p2[:, self.sources] * shape if self.has_signal else np.ones((t, f.size))
        return noise, signal

    def _power_elimination(self, p2, delta, scale, ty0, tz, k, w) -> None:
        """|h|² of every column through Gauss–Jordan on contiguous (trial, frequency) vectors."""
        r = delta.shape[1]
        t = delta.shape[0]
        # Rows of the r × (r + 1) systems are contiguous vectors over (trial, frequency),
        # in small chunks of trials so that they stay in cache.
        kt = np.ascontiguousarray(k.transpose(1, 2, 0))  # (r, r, F)
        wt = np.ascontiguousarray(w.T)  # (r, F)
        ty = np.ascontiguousarray(ty0[..., 0].T)  # (S+1, F)
        zt = np.ascontiguousarray(tz.transpose(1, 2, 0))  # (S+1, r, F)
        for lo in range(0, t, _SOLVE_CHUNK):
            hi = min(t, lo + _SOLVE_CHUNK)
            d = delta[lo:hi].T[:, :, None] * scale.T[:, None, :]  # (r, t', F)
            aug = np.empty((r, r + 1) + d.shape[1:], complex)
            for i in range(r):
                for j in range(r):
                    np.multiply(d[i], kt[i, j], out=aug[i, j])
                aug[i, i] += 1.0
                np.multiply(d[i], wt[i], out=aug[i, r])
            c = _solve_augmented(aug)  # (r, t', F)
            for j in range(ty.shape[0]):
                h = ty[j] - zt[j, 0] * c[0]
                for q in range(1, r):
                    h -= zt[j, q] * c[q]
                np.multiply(h.real, h.real, out=p2[lo:hi, j])
                p2[lo:hi, j] += h.imag**2

    def _power_lapack(self, p2, delta, scale, ty0, tz, k, w) -> None:
        """The same with the r × r systems solved by numpy.linalg.solve (many moved parts)."""
        t, r = delta.shape
        eye = np.eye(r)
        for lo in range(0, t, _SOLVE_CHUNK):
            hi = min(t, lo + _SOLVE_CHUNK)
            d = delta[lo:hi, None, :] * scale[None]  # (t', F, r)
            mat = d[..., :, None] * k[None] + eye
            c = np.linalg.solve(mat, (d * w[None])[..., None])  # (t', F, r, 1)
            h = ty0[None, ..., 0] - (tz[None] @ c)[..., 0]  # (t', F, S+1)
            p2[lo:hi] = (h.real**2 + h.imag**2).transpose(0, 2, 1)


def _solve_augmented(aug: np.ndarray) -> np.ndarray:
    """Solve [M | b] (r, r + 1, ...) by Gauss–Jordan elimination in place, M near the identity.

    Without pivoting: M = I + D·K differs from the identity by the relative change of the
    moved parts; a pivot under 1e-6 sends the design to full budgets.
    """
    r = aug.shape[0]
    for k in range(r):
        pivot = aug[k, k].copy()
        if np.min(np.abs(pivot)) < 1e-6:
            raise Unsupported("a moved part changes the circuit too much for the update")
        for j in range(k, r + 1):
            aug[k, j] /= pivot
        for i in range(r):
            if i != k:
                factor = aug[i, k].copy()
                for j in range(k, r + 1):
                    aug[i, j] -= factor * aug[k, j]
    return aug[:, r]


class ExactTrials:
    """Every trial's front-end contributions solved exactly, in chunks (see the module notes).

    Parameters
    ----------
    model : SpreadModel
        The design's factor model: its parameters, keys and the outputs that are not
        the front end's.

    Raises
    ------
    Unsupported
        When the design's trials cannot be reproduced this way (a spread that changes
        the circuit's structure, the digital path or a behavioural response; a value no
        law fits; a check trial that deviates from its full budget).
    """

    def __init__(self, model: SpreadModel, *, checks: int = 4, seed: int = 1):
        from .model import exact_budget

        self.model = model
        design = model.design
        chain = design.chain()
        if chain.digital is None:
            raise Unsupported("no digital path")
        self.band = design.band
        self.digital = chain.digital
        circuit = circuit_of(chain)
        structure = _structure(circuit)
        base = _numbers(circuit)
        laws: list[list[tuple[int, Law]]] = []
        for p in model.parameters:
            pts = _probe_points(p)
            rows = []
            for t in pts:
                ch = design.variant({p.field: t}).chain()
                if ch.digital != chain.digital:
                    raise Unsupported(f"{p.field} moves the digital path")
                c = circuit_of(ch)
                if _structure(c) != structure:
                    raise Unsupported(f"{p.field} changes the circuit's structure")
                rows.append(_numbers(c))
            rows = np.array(rows)
            mine = []
            for i in range(base.size):
                if base[i] == 0:
                    if np.any(rows[:, i] != 0):
                        raise Unsupported(f"{p.field} moves a value that is zero when typical")
                    continue
                law = _fit(p.typical, pts, rows[:, i] / base[i])
                if law is None:
                    raise Unsupported(f"{p.field}: no law fits a part value")
                if law.kind != "none":
                    mine.append((i, Law(i, law.kind, law.theta0, law.a, law.b, law.c)))
            laws.append(mine)
        self.laws = laws
        self.base = base
        moved = np.zeros(base.size, bool)
        for mine in laws:
            for i, _ in mine:
                moved[i] = True
        self.segments = []
        offset = 0
        for seg in circuit.segments:
            s = _Segment(seg, moved, offset)
            self.segments.append(s)
            offset += s.size
        self.n_stamps = offset
        self.sources = circuit.sources
        keys = {k: i for i, k in enumerate(model.keys)}
        self.rows = np.array([keys.get(s.contribution_id, -1) for s in self.sources], dtype=int)
        #: Rows of the model's outputs this path replaces (the front end's contributions).
        self.front_end_rows = np.unique(self.rows[self.rows >= 0])
        f_low = self.band.f_low_hz
        self.k_lo = math.floor(POINTS_PER_DECADE * math.log10(f_low / 4.0))
        self._rules: dict[int, FoldRules] = {}
        self._validation: dict[int, list[np.ndarray]] = {}
        # Validation tables: the typical design and every spread at its ends.
        ends = [np.array([p.typical for p in model.parameters])[:, None]]
        for j, p in enumerate(model.parameters):
            for v in p.ends:
                col = ends[0].copy()
                col[j] = v
                ends.append(col)
        self._validation_theta = np.concatenate(ends, axis=1) if model.parameters else ends[0]
        self._collect_validation()
        self.deviation = 0.0
        self.checks = 0
        if checks > 0 and model.parameters:
            from .trials import sample, streams

            theta = sample(model.parameters, checks, streams(seed + 7919, len(model.parameters)))
            mine = self.contribution_powers(theta)
            names = [p.field for p in model.parameters]
            worst = 0.0
            for i in range(checks):
                b = exact_budget(design, dict(zip(names, theta[:, i], strict=True)))
                power = {c.id: c.rms_v**2 for c in b.contributions}
                for row in set(self.rows[self.rows >= 0]):
                    ref = power.get(model.keys[row], 0.0)
                    got = mine[row, i]
                    if ref == 0 and got == 0:
                        continue
                    worst = max(worst, abs(got / ref - 1.0) if ref else math.inf)
            self.deviation, self.checks = worst, checks
            if worst > EXACT_TOLERANCE:
                raise Unsupported(f"deviates from full budgets by {format_percent(worst)}")

    # -- per trial --------------------------------------------------------------

    def _values(self, theta: np.ndarray) -> np.ndarray:
        n = theta.shape[1]
        out = np.empty((n, self.base.size))
        out[:] = self.base
        for j, mine in enumerate(self.laws):
            for i, law in mine:
                out[:, i] *= law.factor(theta[j])
        return out

    def _lattice(self, k_hi: int) -> np.ndarray:
        return 10.0 ** (np.arange(self.k_lo, k_hi + 1) / POINTS_PER_DECADE)

    def _tables(self, values: np.ndarray):
        """ln|H|² (T, S, N) per lattice top k_hi, with each trial's index: {k_hi: (trials, ...)}."""
        stamps = values[:, : self.n_stamps]
        char = np.full(values.shape[0], -np.inf)
        for s in self.segments:
            char = np.maximum(char, s.characteristic_hz(stamps[:, s.offset : s.offset + s.size]))
        char = np.maximum(char, 1.0) if not self.segments else char
        f_low = self.band.f_low_hz
        hi = np.maximum(_TOP_FACTOR * char, 1e3 * f_low)
        k_hi = POINTS_PER_DECADE * np.ceil(np.log10(hi)).astype(int)
        k_hi = np.maximum(k_hi, self.k_lo + 8)
        out = {}
        for key in np.unique(k_hi):
            trials = np.flatnonzero(k_hi == key)
            f = self._lattice(int(key))
            rows = []
            downstream = np.ones((trials.size, f.size))
            for s in reversed(self.segments):
                noise, signal = s.power(f, int(key), stamps[trials, s.offset : s.offset + s.size])
                rows.append(noise * downstream[:, None, :])
                downstream = downstream * signal
            rows.reverse()
            power = np.concatenate(rows, axis=1)  # (T, S, N)
            out[int(key)] = (trials, f, power)
        return out

    def _collect_validation(self) -> None:
        values = self._values(self._validation_theta)
        for key, (_, _lattice, power) in self._tables(values).items():
            live = np.max(power, axis=2) > 0
            lp = np.log(np.maximum(power, _TINY))
            self._validation.setdefault(key, []).append(lp[live])

    def _rules_for(self, key: int, f: np.ndarray, log_power: np.ndarray) -> FoldRules:
        rules = self._rules.get(key)
        if rules is None:
            found = self._validation.get(key)
            rows = np.concatenate(found) if found else log_power.reshape(-1, f.size)[:8]
            step = math.log(10.0) / POINTS_PER_DECADE
            rules = FoldRules(
                self.digital,
                self.band.f_low_hz,
                2000,
                math.log(float(f[0])),
                step,
                f.size,
                rows,
            )
            self._rules[key] = rules
        return rules

    def contribution_powers(self, theta: np.ndarray, gain: np.ndarray | None = None) -> np.ndarray:
        """Power at the sensor (V²) of every key of the model fed by the front end, (keys, n);
        rows of other keys are zero. ``gain`` is each trial's gain from the sensor to the ADC
        (the factor model's when omitted)."""
        theta = np.asarray(theta, dtype=float)
        n = theta.shape[1]
        if gain is None:
            gain = self.model.outputs(theta)[self.model.n_contributions + 1]
        if n > EXACT_CHUNK:
            return np.concatenate(
                [
                    self.contribution_powers(
                        theta[:, i : i + EXACT_CHUNK], gain[i : i + EXACT_CHUNK]
                    )
                    for i in range(0, n, EXACT_CHUNK)
                ],
                axis=1,
            )
        values = self._values(theta)
        white_sq = values[:, self.n_stamps : self.n_stamps + len(self.sources)]
        corner = values[:, self.n_stamps + len(self.sources) :]
        out = np.zeros((len(self.model.keys), n))
        step = math.log(10.0) / POINTS_PER_DECADE
        for key, (trials, f, power) in self._tables(values).items():
            t, s, size = power.shape
            log_power = np.log(np.maximum(power, _TINY))
            final = (log_power[..., -1] - log_power[..., -2]) / step  # (T, S)
            live = np.max(power, axis=2) > 0.0
            local = np.diff(log_power, axis=2) / step
            moving = np.any((np.abs(local - final[..., None]) > 0.05) & live[..., None], axis=1)
            any_moving = np.any(moving, axis=1)
            last = size - 2 - np.argmax(moving[:, ::-1], axis=1)
            lo = float(f[0])
            settled = np.where(any_moving, f[np.minimum(last + 1, size - 1)], lo)
            settled = np.minimum(np.maximum(settled, 10.0 * lo), float(f[-1]) / 1e3)
            slopes = np.where(live, final, -np.inf)
            order = np.maximum(1, np.floor(-slopes.max(axis=1) / 2.0 + 1e-6)).astype(int)
            order = np.where(np.any(live, axis=1), order, 1)
            rules = self._rules_for(key, f, log_power)
            owner = np.repeat(np.arange(t), s)
            top = np.repeat(1e3 * settled, s)
            white_bw, flicker = fold_tables(
                rules, log_power.reshape(t * s, size), owner, top, np.repeat(order, s)
            )
            white_bw = white_bw.reshape(t, s)
            flicker = flicker.reshape(t, s)
            variance = white_sq[trials] * (white_bw + corner[trials] * flicker)
            variance = np.where(live & (white_sq[trials] != 0), np.maximum(variance, 0.0), 0.0)
            variance = variance / (gain[trials, None] ** 2)
            for j, row in enumerate(self.rows):
                if row >= 0:
                    out[row, trials] += variance[:, j]
        return out


_ENGINES: dict[int, tuple[SpreadModel, ExactTrials | None]] = {}


def exact_trials(model: SpreadModel) -> ExactTrials | None:
    """The batched exact path of ``model``, or None when its trials need full budgets.

    The last few are kept (keyed by the model object), so repeated runs of one model
    build it once.
    """
    found = _ENGINES.get(id(model))
    if found is not None and found[0] is model:
        return found[1]
    try:
        engine: ExactTrials | None = ExactTrials(model)
    except (Unsupported, ResplanError, ArithmeticError, ValueError, np.linalg.LinAlgError):
        # Anything the batched path cannot do (a design refused at a spread's end, a
        # singular circuit there) leaves the trials to full budgets, which say why.
        engine = None
    if len(_ENGINES) >= 4:
        _ENGINES.pop(next(iter(_ENGINES)))
    _ENGINES[id(model)] = (model, engine)
    return engine
