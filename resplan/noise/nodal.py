r"""Modified nodal analysis of a :class:`~resplan.noise.netlist.Netlist`, batched over frequency.

The circuit becomes :math:`(G + sC)\,x = b`, with unknowns ``x`` the node
voltages and the currents of voltage-defined branches (voltage sources and op-amp
outputs), following Ho, Ruehli and Brennan (1975). An op amp with gain
:math:`A(s) = A_0/(1 + sA_0/(2\pi\,\mathrm{GBW}))` enters as the row

.. math:: \left(\frac{1}{A_0} + \frac{s}{2\pi\,\mathrm{GBW}}\right) v_\mathrm{out}
          - v_+ + v_- = 0,

which is linear in ``s``, so the whole circuit is one pencil ``G + sC`` (ideal op
amps have both coefficients 0, a nullor).

Every transfer to the output comes from one solve per frequency of the transposed
(adjoint) system :math:`(G + sC)^\mathsf{T} y = e_\mathrm{out}` (Rohrer, Nagel,
Meyer and Weber 1971): the transfer from a current source driving from node ``a``
into node ``b`` is :math:`y_b - y_a` (V/A), and from the voltage source of branch
``k`` is :math:`y_k` (V/V). All frequencies are solved at once by
:func:`numpy.linalg.solve` on the stack of matrices (no Python loop over
frequency); the stack is processed in chunks to bound memory. Optionally
(``method="schur"``) one generalised Schur form of the pencil serves every
frequency, leaving a triangular solve per frequency.

The noise of each source at the output is its density² times the squared magnitude
of its transfer; uncorrelated sources add in power.

References
----------
- C.-W. Ho, A. E. Ruehli, P. A. Brennan, "The modified nodal approach to network
  analysis", IEEE Trans. Circuits Syst. CAS-22 (1975) 504–509.
- R. Rohrer, L. Nagel, R. Meyer, L. Weber, "Computationally efficient electronic-
  circuit noise calculations", IEEE J. Solid-State Circuits SC-6 (1971) 204–213.

This module imports numpy only; scipy is loaded by :func:`circuit_poles` when called.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Literal

import numpy as np
from numpy.typing import ArrayLike

from ..errors import DesignError
from ..units.formatting import format_complex, format_si
from .cascade import CASCADE_UNKNOWNS, solve_cascade
from .netlist import (
    GROUND,
    Capacitor,
    CircuitError,
    CurrentSource,
    Netlist,
    NoiseSource,
    OpAmp,
    Resistor,
    VoltageNoise,
    VoltageSource,
    part_nodes,
)

__all__ = [
    "MnaSystem",
    "NoiseSolution",
    "Stability",
    "build_mna",
    "solve_noise",
    "circuit_poles",
    "check_stability",
    "integrate_psd",
]

#: Complex entries per chunk of the stacked matrices (2**17 entries = 2 MiB): small
#: enough to stay in cache, which measured faster than one large stack.
_CHUNK_ENTRIES = 2**17
#: Rows per block of the Schur path's back substitution (16 measured fastest).
_SCHUR_BLOCK = 16


# ---------------------------------------------------------------------------
# the matrices


@dataclass(frozen=True)
class MnaSystem:
    """The s-domain modified nodal matrices of a netlist: ``(G + sC) x = b``.

    Attributes
    ----------
    netlist : Netlist
        The circuit.
    unknowns : tuple of str
        Names of the unknowns: ``"v(node)"`` for node voltages, then
        ``"i(part)"`` for each voltage-defined branch.
    conductance : ndarray, shape (n, n)
        G, real (S for node rows; dimensionless in branch rows).
    capacitance : ndarray, shape (n, n)
        C, real (F for node rows; s in op-amp rows).
    node_index : dict
        Node name → row; ground is absent.
    branch_index : dict
        Part name → row of its branch current (voltage sources and op amps).
    """

    netlist: Netlist
    unknowns: tuple[str, ...]
    conductance: np.ndarray
    capacitance: np.ndarray
    node_index: dict[str, int]
    branch_index: dict[str, int]

    @property
    def size(self) -> int:
        """Number of unknowns."""
        return len(self.unknowns)

    def output_selector(self) -> np.ndarray:
        """The vector e with ``e·x = v(output) − v(output_reference)``."""
        e = np.zeros(self.size)
        net = self.netlist
        if net.output != GROUND:
            e[self.node_index[net.output]] += 1.0
        if net.output_reference != GROUND:
            e[self.node_index[net.output_reference]] -= 1.0
        return e

    def unknown_parts(self, row: int) -> tuple[str, str | None]:
        """The node or part that unknown ``row`` belongs to: (node, part)."""
        name = self.unknowns[row]
        inner = name[2:-1]
        return (inner, None) if name.startswith("v(") else ("", inner)


class _UnionFind:
    def __init__(self) -> None:
        self.parent: dict[str, str] = {}

    def find(self, x: str) -> str:
        self.parent.setdefault(x, x)
        while self.parent[x] != x:
            self.parent[x] = self.parent[self.parent[x]]
            x = self.parent[x]
        return x

    def union(self, a: str, b: str) -> bool:
        ra, rb = self.find(a), self.find(b)
        if ra == rb:
            return False
        self.parent[ra] = rb
        return True


def _check_topology(net: Netlist) -> None:
    """Reject circuits singular by their graph alone, naming the nodes and parts."""
    connected = _UnionFind()
    sources = _UnionFind()
    connected.find(GROUND)
    for part in net.parts:
        if isinstance(part, Resistor | Capacitor):
            connected.union(part.a, part.b)
        elif isinstance(part, VoltageNoise | VoltageSource | OpAmp):
            a, b = (part.output, GROUND) if isinstance(part, OpAmp) else (part.plus, part.minus)
            if a == b:
                raise CircuitError(
                    "a voltage source shorted on itself", nodes=[a], parts=[part.name]
                )
            connected.union(a, b)
            if not sources.union(a, b):
                loop = [
                    p.name
                    for p in net.parts
                    if isinstance(p, VoltageNoise | VoltageSource | OpAmp)
                    and sources.find(p.output if isinstance(p, OpAmp) else p.plus)
                    == sources.find(a)
                ]
                raise CircuitError(
                    "a loop of voltage sources (an op-amp output is a source "
                    "to ground) leaves a branch current undefined",
                    nodes=[a, b],
                    parts=loop,
                )
    ground = connected.find(GROUND)
    floating = [n for n in net.nodes if connected.find(n) != ground]
    if floating:
        touching = [p.name for p in net.parts if set(part_nodes(p)) & set(floating)]
        raise CircuitError(
            "floating node: no path to ground through resistors, capacitors "
            "or voltage sources (current sources and op-amp inputs do not "
            "count)",
            nodes=floating,
            parts=touching,
        )


def build_mna(netlist: Netlist) -> MnaSystem:
    """Stamp the modified nodal matrices of a netlist.

    Parameters
    ----------
    netlist : Netlist
        The circuit.

    Returns
    -------
    MnaSystem
        G and C with the names of their unknowns.

    Raises
    ------
    CircuitError
        A floating node or a loop of voltage sources, naming nodes and parts.

    Notes
    -----
    Stamps as in Ho, Ruehli and Brennan (1975): a conductance g between a and b adds
    g at (a, a) and (b, b) and −g at (a, b) and (b, a); a voltage source of branch k
    from plus p to minus m adds +1 at (p, k) and (k, p) and −1 at (m, k) and (k, m).

    Examples
    --------
    >>> from resplan.noise.netlist import Netlist, Resistor, VoltageSource
    >>> mna = build_mna(Netlist([VoltageSource("vin", "in", "0"),
    ...                          Resistor("R1", "in", "0", 1e3)], output="in"))
    >>> mna.unknowns
    ('v(in)', 'i(vin)')
    >>> mna.conductance.tolist()
    [[0.001, 1.0], [1.0, 0.0]]
    """
    _check_topology(netlist)
    nodes = netlist.nodes
    node_index = {n: i for i, n in enumerate(nodes)}
    branch_parts = [p for p in netlist.parts if isinstance(p, VoltageNoise | VoltageSource | OpAmp)]
    branch_index = {p.name: len(nodes) + i for i, p in enumerate(branch_parts)}
    n = len(nodes) + len(branch_parts)
    g = np.zeros((n, n))
    c = np.zeros((n, n))

    def stamp_pair(matrix: np.ndarray, a: str, b: str, value: float) -> None:
        ia, ib = node_index.get(a), node_index.get(b)
        if ia is not None:
            matrix[ia, ia] += value
        if ib is not None:
            matrix[ib, ib] += value
        if ia is not None and ib is not None:
            matrix[ia, ib] -= value
            matrix[ib, ia] -= value

    def stamp(matrix: np.ndarray, row: int, node: str, value: float) -> None:
        i = node_index.get(node)
        if i is not None:
            matrix[row, i] += value

    for part in netlist.parts:
        if isinstance(part, Resistor):
            stamp_pair(g, part.a, part.b, 1.0 / part.resistance_ohm)
        elif isinstance(part, Capacitor):
            stamp_pair(c, part.a, part.b, part.capacitance_f)
        elif isinstance(part, VoltageNoise | VoltageSource):
            k = branch_index[part.name]
            stamp(g, k, part.plus, 1.0)
            stamp(g, k, part.minus, -1.0)
            # KCL columns are the transpose of the constraint row.
            for node, sign in ((part.plus, 1.0), (part.minus, -1.0)):
                i = node_index.get(node)
                if i is not None:
                    g[i, k] += sign
        elif isinstance(part, OpAmp):
            k = branch_index[part.name]
            g[node_index[part.output], k] += 1.0
            stamp(g, k, part.output, 0.0 if math.isinf(part.dc_gain) else 1.0 / part.dc_gain)
            stamp(
                c,
                k,
                part.output,
                0.0 if math.isinf(part.gbw_hz) else 1.0 / (2.0 * math.pi * part.gbw_hz),
            )
            stamp(g, k, part.plus, -1.0)
            stamp(g, k, part.minus, 1.0)
    unknowns = tuple(f"v({x})" for x in nodes) + tuple(f"i({p.name})" for p in branch_parts)
    return MnaSystem(netlist, unknowns, g, c, node_index, branch_index)


# ---------------------------------------------------------------------------
# the frequency-domain solution


def _check_grid(frequency_hz: ArrayLike) -> np.ndarray:
    f = np.asarray(frequency_hz, dtype=float)
    if f.ndim != 1 or f.size == 0 or not np.all(np.isfinite(f)) or np.any(f < 0.0):
        raise DesignError(
            "frequency_hz", frequency_hz, "a non-empty 1-D array of finite frequencies ≥ 0 Hz"
        )
    return f


def _diagnose_singular(mna: MnaSystem, frequency_hz: np.ndarray) -> CircuitError:
    """Name the unknowns and equations of the null space at the worst frequency.

    The right null vector holds the unknowns the circuit leaves free, the left one
    the equations that conflict or repeat (KCL at a node, or a source's or op amp's
    constraint); both are read after equilibration so that volts and amperes compare.
    """
    s = 2j * np.pi * frequency_hz
    m = mna.conductance[None] + s[:, None, None] * mna.capacitance[None]
    sv = np.linalg.svd(m, compute_uv=False)
    ratio = sv[:, -1] / np.maximum(sv[:, 0], np.finfo(float).tiny)
    worst = int(np.argmin(ratio))
    omega = 2.0 * np.pi * float(frequency_hz[worst])
    gs, cs = _equilibrate(mna.conductance, mna.capacitance, omega if omega > 0 else 1.0)
    u, _, vh = np.linalg.svd(gs + 1j * omega * cs)
    nodes: dict[str, None] = {}
    parts: dict[str, None] = {}
    for vector in (np.abs(vh[-1]), np.abs(u[:, -1])):
        for row in np.flatnonzero(vector > 0.1 * vector.max()):
            node, part = mna.unknown_parts(int(row))
            if part:
                parts.setdefault(part, None)
            else:
                nodes.setdefault(node, None)
    return CircuitError(
        f"singular at {format_si(frequency_hz[worst], 'Hz')}: the circuit does not fix "
        "these voltages or branch currents (a node held only by capacitors "
        "at 0 Hz, or an ideal op amp without feedback)",
        nodes=list(nodes),
        parts=list(parts),
    )


def _adjoint_solve(
    mna: MnaSystem, frequency_hz: np.ndarray, rhs: np.ndarray, cascade: bool = True
) -> np.ndarray:
    """Solve (G + sC)ᵀ y = rhs on every frequency; returns y of shape (n, F).

    A large system is solved as a cascade first (:mod:`resplan.noise.cascade`)."""
    n = mna.size
    gt, ct = mna.conductance.T, mna.capacitance.T
    if cascade and n >= CASCADE_UNKNOWNS:
        dense = lambda f: _adjoint_solve(mna, f, rhs, cascade=False)  # noqa: E731
        y = solve_cascade(
            np.ascontiguousarray(gt), np.ascontiguousarray(ct), frequency_hz, rhs, dense
        )
        if y is not None:
            return y
    chunk = max(1, _CHUNK_ENTRIES // max(1, n * n))
    out = np.empty((frequency_hz.size, n), dtype=complex)
    for start in range(0, frequency_hz.size, chunk):
        f = frequency_hz[start : start + chunk]
        m = gt[None] + (2j * np.pi * f)[:, None, None] * ct[None]
        b = np.broadcast_to(rhs[:, None], (f.size, n, 1))
        try:
            y = np.linalg.solve(m, b)[..., 0]
        except np.linalg.LinAlgError:
            raise _diagnose_singular(mna, f) from None
        if not np.all(np.isfinite(y)):
            raise _diagnose_singular(mna, f)
        out[start : start + chunk] = y
    return out.T


def _schur_solve(mna: MnaSystem, frequency_hz: np.ndarray, rhs: np.ndarray) -> np.ndarray:
    """Solve (G + sC)ᵀ y = rhs on every frequency through one generalised Schur form.

    The complex QZ decomposition Gᵀ = Q·S·Zᴴ, Cᵀ = Q·T·Zᴴ (S, T upper triangular)
    is computed once; then (S + sT) w = Qᴴ·rhs is a triangular system for every s,
    solved by back substitution vectorised over the grid (O(n²) per frequency
    instead of O(n³)), and y = Z·w. Orthogonal transforms and triangular solves are
    backward stable (Golub & Van Loan, *Matrix Computations*, 4th ed., §7.7.2 and
    §3.1, from memory); the tests hold it to the stacked LU solve.
    """
    from scipy import linalg  # heavy: loaded only on this path

    gt, ct = mna.conductance.T, mna.capacitance.T
    upper_s, upper_t, q, z = linalg.qz(gt, ct, output="complex")
    s = 2j * np.pi * frequency_hz
    n = mna.size
    diagonal = np.diagonal(upper_s)[:, None] + np.diagonal(upper_t)[:, None] * s[None, :]
    scale = np.linalg.norm(upper_s) + np.abs(s)[None, :] * np.linalg.norm(upper_t)
    if np.any(np.abs(diagonal) <= 64 * n * np.finfo(float).eps * scale):
        bad = np.any(np.abs(diagonal) <= 64 * n * np.finfo(float).eps * scale, axis=0)
        raise _diagnose_singular(mna, frequency_hz[bad])
    # Blocked back substitution: rows within a block one by one, the rows above a
    # block updated by two matrix products (the s factor differs per column).
    r = np.repeat((q.conj().T @ rhs)[:, None], frequency_hz.size, axis=1)
    w = np.empty((n, frequency_hz.size), dtype=complex)
    for high in range(n, 0, -_SCHUR_BLOCK):
        low = max(0, high - _SCHUR_BLOCK)
        for i in range(high - 1, low - 1, -1):
            if i + 1 < high:
                r[i] -= upper_s[i, i + 1 : high] @ w[i + 1 : high]
                r[i] -= s * (upper_t[i, i + 1 : high] @ w[i + 1 : high])
            w[i] = r[i] / diagonal[i]
        if low > 0:
            r[:low] -= upper_s[:low, low:high] @ w[low:high]
            r[:low] -= s * (upper_t[:low, low:high] @ w[low:high])
    y = z @ w
    if not np.all(np.isfinite(y)):
        raise _diagnose_singular(mna, frequency_hz)
    return y


def _transfer_columns(
    mna: MnaSystem, y: np.ndarray, sources: list[tuple[str, str, str, str]]
) -> np.ndarray:
    """Transfers (F, S) from sources given as (kind, name, a, b), from y of shape (n, F)."""
    padded = np.concatenate([y, np.zeros((1, y.shape[1]), dtype=complex)], axis=0)
    ground = y.shape[0]
    plus = np.empty(len(sources), dtype=int)
    minus = np.full(len(sources), ground, dtype=int)
    for j, (kind, name, a, b) in enumerate(sources):
        if kind == "voltage":
            plus[j] = mna.branch_index[name]
        else:
            plus[j] = mna.node_index.get(b, ground)
            minus[j] = mna.node_index.get(a, ground)
    return (padded[plus] - padded[minus]).T


def _density_sq(sources: tuple[NoiseSource, ...], frequency_hz: np.ndarray) -> np.ndarray:
    white = np.array([s.white_sq for s in sources], dtype=float)
    corner = np.array([s.corner_hz for s in sources], dtype=float)
    flicker = corner > 0.0
    if np.any(flicker) and np.any(frequency_hz == 0.0):
        bad = [s.source_id for s in sources if s.corner_hz > 0.0]
        raise CircuitError(
            "a 1/f source has no finite density at 0 Hz; start the grid above 0 Hz", parts=bad
        )
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = np.where(flicker[None, :], corner[None, :] / frequency_hz[:, None], 0.0)
    return white[None, :] * (1.0 + ratio)


@dataclass(frozen=True)
class NoiseSolution:
    """Transfers and output noise of every source of a netlist on a frequency grid.

    Attributes
    ----------
    frequency_hz : ndarray, shape (F,)
        The grid, Hz.
    source_ids : tuple of str
        Noise source ids, in netlist order; column ``j`` of the arrays is source ``j``.
    units : tuple of str
        Unit of each transfer: ``"V/V"`` (voltage source) or ``"V/A"`` (current source).
    transfer : ndarray, shape (F, S), complex
        Transfer from each source to the output voltage.
    source_psd : ndarray, shape (F, S)
        Density² of each source: V²/Hz or A²/Hz.
    output_psd : ndarray, shape (F, S)
        Contribution of each source to the output, V²/Hz.
    signal_input : str or None
        Name of the signal source.
    signal_transfer : ndarray, shape (F,), complex, or None
        Transfer from the signal source to the output (V/V, or V/A for a current input).
    """

    frequency_hz: np.ndarray
    source_ids: tuple[str, ...]
    units: tuple[str, ...]
    transfer: np.ndarray
    source_psd: np.ndarray
    signal_input: str | None
    signal_transfer: np.ndarray | None
    output_psd: np.ndarray = field(init=False)

    def __post_init__(self) -> None:
        object.__setattr__(self, "output_psd", self.source_psd * np.abs(self.transfer) ** 2)

    def _column(self, source_id: str) -> int:
        try:
            return self.source_ids.index(source_id)
        except ValueError:
            raise KeyError(
                f"no noise source {source_id!r}; the ids are {', '.join(self.source_ids)}"
            ) from None

    def transfer_of(self, source_id: str) -> np.ndarray:
        """Transfer (F,) from one source to the output, V/V or V/A."""
        return self.transfer[:, self._column(source_id)]

    def psd_of(self, source_id: str) -> np.ndarray:
        """Output PSD contribution (F,) of one source, V²/Hz."""
        return self.output_psd[:, self._column(source_id)]

    @property
    def total_psd_v2_per_hz(self) -> np.ndarray:
        """Total output PSD (F,), V²/Hz: the sources are uncorrelated and add in power."""
        return self.output_psd.sum(axis=1)

    @property
    def total_density_v_per_rthz(self) -> np.ndarray:
        """Total output noise density (F,), V/√Hz."""
        return np.sqrt(self.total_psd_v2_per_hz)

    def input_referred_psd(self) -> np.ndarray:
        """Total output PSD divided by |signal transfer|² (F,): V²/Hz (or A²/Hz) at the input."""
        if self.signal_transfer is None:
            raise CircuitError("no signal input is named, so nothing to refer the noise to")
        return self.total_psd_v2_per_hz / np.abs(self.signal_transfer) ** 2

    def rms_v(
        self,
        f_low_hz: float | None = None,
        f_high_hz: float | None = None,
        source_id: str | None = None,
    ) -> float:
        """Output rms noise in a band, V: each source integrated, then added in power.

        The band defaults to the whole grid; see :func:`integrate_psd`.
        """
        columns = self.output_psd if source_id is None else self.psd_of(source_id)[:, None]
        power = integrate_psd(self.frequency_hz, columns, f_low_hz, f_high_hz)
        return float(np.sqrt(np.sum(power)))

    def rms_by_source(
        self, f_low_hz: float | None = None, f_high_hz: float | None = None
    ) -> dict[str, float]:
        """Output rms of each source in a band, V."""
        power = integrate_psd(self.frequency_hz, self.output_psd, f_low_hz, f_high_hz)
        return dict(zip(self.source_ids, np.sqrt(power).tolist(), strict=True))


def solve_noise(
    netlist: Netlist, frequency_hz: ArrayLike, method: Literal["lu", "schur"] = "lu"
) -> NoiseSolution:
    """Solve a netlist on a frequency grid: every noise transfer and PSD, and the signal gain.

    Parameters
    ----------
    netlist : Netlist
        The circuit.
    frequency_hz : array_like, shape (F,)
        Frequencies, Hz (finite, ≥ 0; > 0 where a 1/f source is present).
    method : {"lu", "schur"}
        ``"lu"``: the stacked matrices solved by :func:`numpy.linalg.solve`, an LU
        factorisation per frequency, O(n³) each (the reference). ``"schur"``: one
        generalised Schur (QZ) form for all frequencies, then a triangular solve per
        frequency, O(n²) each; several times faster on large grids, loads scipy, and
        agrees with ``"lu"`` to rounding in the tests.

    Returns
    -------
    NoiseSolution

    Raises
    ------
    CircuitError
        A floating node, a loop of voltage sources, or a matrix singular at some
        frequency; the message names the nodes and parts involved.

    Notes
    -----
    One adjoint solve per frequency (Rohrer et al. 1971) serves every source; the
    output PSD of a source of density² S(f) with transfer H(f) is S(f)·|H(f)|².

    Examples
    --------
    A 1 kΩ resistor with 1 nF to ground: its thermal noise at the output is
    √(4kTR) at low frequency (Johnson 1928).

    >>> from resplan.noise.netlist import Capacitor, Netlist, Resistor
    >>> net = Netlist([Resistor("R1", "out", "0", 1e3), Capacitor("C1", "out", "0", 1e-9)],
    ...               output="out")
    >>> sol = solve_noise(net, [1.0, 1e9])
    >>> float(sol.total_density_v_per_rthz[0] / (4 * 1.380649e-23 * 300 * 1e3) ** 0.5)
    1.0
    """
    f = _check_grid(frequency_hz)
    mna = build_mna(netlist)
    if method == "lu":
        y = _adjoint_solve(mna, f, mna.output_selector())
    elif method == "schur":
        y = _schur_solve(mna, f, mna.output_selector())
    else:
        raise DesignError("method", method, '"lu" or "schur"')
    sources = netlist.noise_sources
    columns = [(s.kind, s.part, s.a, s.b) for s in sources]
    signal = None
    if netlist.signal_input is not None:
        part = netlist.part(netlist.signal_input)
        if isinstance(part, CurrentSource):
            columns.append(("current", part.name, part.a, part.b))
        else:
            columns.append(("voltage", part.name, part.plus, part.minus))
    transfer = _transfer_columns(mna, y, columns) if columns else np.zeros((f.size, 0), complex)
    if netlist.signal_input is not None:
        signal = transfer[:, -1].copy()
        transfer = transfer[:, :-1]
    return NoiseSolution(
        frequency_hz=f,
        source_ids=tuple(s.source_id for s in sources),
        units=tuple(s.unit for s in sources),
        transfer=transfer,
        source_psd=_density_sq(sources, f) if sources else np.zeros((f.size, 0)),
        signal_input=netlist.signal_input,
        signal_transfer=signal,
    )


# ---------------------------------------------------------------------------
# integration on the grid


def _loglog_segments(f1: np.ndarray, f2: np.ndarray, s1: np.ndarray, s2: np.ndarray) -> np.ndarray:
    """∫ over [f1, f2] of a PSD that is a power law between (f1, s1) and (f2, s2)."""
    trapezoid = 0.5 * (s1 + s2) * (f2 - f1)
    usable = (f1 > 0.0) & (s1 > 0.0) & (s2 > 0.0) & (f2 > f1)
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        span = np.log(f2 / f1)
        x = (np.log(s2 / s1) / span + 1.0) * span  # (exponent + 1)·ln(f2/f1)
        factor = np.where(np.abs(x) < 1e-12, 1.0, np.expm1(x) / x)
        power_law = s1 * f1 * span * factor
    return np.where(usable & np.isfinite(power_law), power_law, trapezoid)


def _loglog_value(
    f: float, f1: np.ndarray, f2: np.ndarray, s1: np.ndarray, s2: np.ndarray
) -> np.ndarray:
    if f1 <= 0.0 or np.any(s1 <= 0.0) or np.any(s2 <= 0.0):
        t = (f - f1) / (f2 - f1)
        return s1 + t * (s2 - s1)
    t = math.log(f / f1) / math.log(f2 / f1)
    return s1 * (s2 / s1) ** t


def integrate_psd(
    frequency_hz: ArrayLike,
    psd: ArrayLike,
    f_low_hz: float | None = None,
    f_high_hz: float | None = None,
) -> np.ndarray:
    r"""Integrate PSDs over a band of the grid, assuming a power law between grid points.

    Parameters
    ----------
    frequency_hz : array_like, shape (F,)
        Increasing grid, Hz.
    psd : array_like, shape (F,) or (F, S)
        PSDs on the grid (any unit per Hz).
    f_low_hz, f_high_hz : float, optional
        Band edges, Hz, within the grid; the grid's ends by default. An edge between
        grid points is reached by the same power law.

    Returns
    -------
    ndarray, shape () or (S,)
        Power in the band (unit of ``psd`` times Hz).

    Notes
    -----
    Between grid points the PSD is taken as :math:`S_1 (f/f_1)^a`, whose integral
    is exact for white, 1/f and filter-skirt slopes; a segment touching 0 Hz or a zero
    PSD falls back to the trapezoid rule. This is also the rule circuit simulators'
    noise analyses use to integrate on logarithmic grids.

    Examples
    --------
    1/f from 1 Hz to 100 Hz is ln(100) (exact on any grid):

    >>> float(integrate_psd([1.0, 10.0, 100.0], [1.0, 0.1, 0.01]))  # doctest: +ELLIPSIS
    4.605170185988...
    """
    f = np.asarray(frequency_hz, dtype=float)
    s = np.asarray(psd, dtype=float)
    if f.ndim != 1 or f.size < 2 or np.any(np.diff(f) <= 0.0):
        raise DesignError("frequency_hz", frequency_hz, "an increasing grid of ≥ 2 points")
    if s.shape[0] != f.size:
        raise DesignError("psd", s.shape, f"{f.size} rows, one per frequency")
    lo = f[0] if f_low_hz is None else float(f_low_hz)
    hi = f[-1] if f_high_hz is None else float(f_high_hz)
    tolerance = 1e-9 * (f[-1] - f[0])
    if not (f[0] - tolerance <= lo < hi <= f[-1] + tolerance):
        raise DesignError(
            "band",
            (f_low_hz, f_high_hz),
            f"f_low < f_high within the grid {format_si(f[0], 'Hz')} to {format_si(f[-1], 'Hz')}",
        )
    lo, hi = max(lo, f[0]), min(hi, f[-1])
    inside = (f > lo) & (f < hi)
    edges = []
    for edge in (lo, hi):
        j = int(np.clip(np.searchsorted(f, edge) - 1, 0, f.size - 2))
        if np.isclose(edge, f[j], rtol=1e-12, atol=0.0):
            edges.append(s[j])
        elif np.isclose(edge, f[j + 1], rtol=1e-12, atol=0.0):
            edges.append(s[j + 1])
        else:
            edges.append(_loglog_value(edge, f[j], f[j + 1], s[j], s[j + 1]))
    grid = np.concatenate([[lo], f[inside], [hi]])
    values = np.concatenate([edges[0][None], s[inside], edges[1][None]], axis=0)
    shape = (-1,) + (1,) * (values.ndim - 1)
    pieces = _loglog_segments(
        grid[:-1].reshape(shape), grid[1:].reshape(shape), values[:-1], values[1:]
    )
    return pieces.sum(axis=0)


# ---------------------------------------------------------------------------
# poles and stability


def _equilibrate(g: np.ndarray, c: np.ndarray, omega: float) -> tuple[np.ndarray, np.ndarray]:
    """Scale rows and columns by powers of two so |G| + ω|C| has unit row and column maxima.

    Diagonal scaling leaves the pencil's eigenvalues unchanged and keeps the
    generalised eigensolver's tolerance meaningful when conductances, capacitances
    and the ±1 entries of branch rows differ by many decades.
    """
    g, c = g.copy(), c.copy()
    for _ in range(4):
        magnitude = np.abs(g) + omega * np.abs(c)
        rows = magnitude.max(axis=1)
        r = np.exp2(-np.round(np.log2(np.where(rows > 0, rows, 1.0))))
        g *= r[:, None]
        c *= r[:, None]
        magnitude = np.abs(g) + omega * np.abs(c)
        cols = magnitude.max(axis=0)
        k = np.exp2(-np.round(np.log2(np.where(cols > 0, cols, 1.0))))
        g *= k[None, :]
        c *= k[None, :]
    return g, c


def circuit_poles(netlist: Netlist) -> np.ndarray:
    """The natural frequencies of a circuit: finite roots of det(G + sC) = 0, rad/s.

    Parameters
    ----------
    netlist : Netlist
        The circuit.

    Returns
    -------
    ndarray, complex
        Poles in rad/s, sorted by magnitude.

    Raises
    ------
    CircuitError
        When det(G + sC) vanishes for every s (the circuit is singular at all
        frequencies).

    Notes
    -----
    The poles are the finite generalised eigenvalues of the pencil (G, −C), from
    :func:`scipy.linalg.eigvals` in homogeneous form (α, β), s = α/β, after a
    diagonal equilibration and a time scaling s = ω_ref·p. Eigenvalues with
    |β| ≤ 1e-10·|α| (the algebraic constraints of sources and op-amp inputs) are
    infinite and left out. These are the poles of the whole network, including any
    that no source excites.

    Examples
    --------
    >>> from resplan.noise.netlist import Capacitor, Netlist, Resistor
    >>> net = Netlist([Resistor("R1", "out", "0", 1e3), Capacitor("C1", "out", "0", 1e-6)],
    ...               output="out")
    >>> p = circuit_poles(net)  # one pole at -1/RC
    >>> round(float(p[0].real), 6), round(float(p[0].imag), 6)
    (-1000.0, 0.0)
    """
    from scipy import linalg  # heavy: loaded only here

    mna = build_mna(netlist)
    g, c = mna.conductance, mna.capacitance
    if not np.any(c):
        return np.zeros(0, dtype=complex)
    omega = float(np.linalg.norm(g) / np.linalg.norm(c))
    gs, cs = _equilibrate(g, c * omega, 1.0)
    alpha, beta = linalg.eigvals(gs, -cs, homogeneous_eigvals=True)
    scale = np.maximum(np.abs(alpha), np.abs(beta))
    if np.any(scale <= 1e-13 * max(1.0, float(scale.max()))):
        raise CircuitError(
            "det(G + sC) vanishes at every frequency: the circuit is singular "
            "(a node or branch current that nothing fixes)"
        )
    finite = np.abs(beta) > 1e-10 * np.abs(alpha)
    poles = omega * alpha[finite] / beta[finite]
    return poles[np.argsort(np.abs(poles), kind="stable")]


@dataclass(frozen=True)
class Stability:
    """The poles of a circuit and the verdict on them.

    Attributes
    ----------
    poles_rad_per_s : ndarray, complex
        Every finite pole, rad/s.
    tolerance : float
        Relative tolerance: a pole counts as on the imaginary axis when
        |Re s| ≤ tolerance·|s|.
    """

    poles_rad_per_s: np.ndarray
    tolerance: float = 1e-9

    @property
    def right_half_plane(self) -> np.ndarray:
        """Poles with Re s > tolerance·|s|: each one makes the circuit unstable."""
        p = self.poles_rad_per_s
        return p[p.real > self.tolerance * np.abs(p)]

    @property
    def on_axis(self) -> np.ndarray:
        """Poles on the imaginary axis (within tolerance), including s = 0: marginal."""
        p = self.poles_rad_per_s
        return p[np.abs(p.real) <= self.tolerance * np.abs(p)]

    @property
    def stable(self) -> bool:
        """True when every pole lies strictly in the left half-plane."""
        return self.right_half_plane.size == 0 and self.on_axis.size == 0

    def describe(self) -> str:
        """One line: stable, or the offending poles in Hz."""
        if self.stable:
            return "stable: every pole in the left half-plane"
        bad = np.concatenate([self.right_half_plane, self.on_axis]) / (2.0 * np.pi)
        listed = ", ".join(format_complex(z, "Hz") for z in bad[:6])
        return f"unstable or marginal: poles at {listed}"


def check_stability(netlist: Netlist, tolerance: float = 1e-9) -> Stability:
    """Poles of a circuit with the verdict: stable when none is in the closed right half-plane.

    Parameters
    ----------
    netlist : Netlist
        The circuit.
    tolerance : float
        Relative tolerance on the real part (see :class:`Stability`).

    Returns
    -------
    Stability

    Notes
    -----
    A linear time-invariant network is stable when all its natural frequencies
    have negative real parts; see :func:`circuit_poles` for how they are found.
    """
    return Stability(circuit_poles(netlist), tolerance)
