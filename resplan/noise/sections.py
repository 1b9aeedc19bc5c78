r"""Low-pass filter sections: Butterworth and Bessel tables, and component values.

A low-pass filter of order n is a cascade of second-order sections, each with a
natural frequency f₀ and quality factor Q, plus one real pole when n is odd.
:func:`filter_sections` computes them from the closed-form prototype poles (the
Butterworth poles on the unit circle; the Bessel poles as roots of the reverse
Bessel polynomial, scaled so that the whole filter is 3 dB down at its cutoff, like
the Butterworth and like ``scipy.signal.besselap(norm="mag")``) once per
(kind, order) and caches them; the tests hold them to the scipy prototypes.
For a pole pair p, p̄ of the prototype,
f₀/f_c = |p| and Q = |p| / (−2 Re p).

Component values come from the section transfer functions, derived here by nodal
analysis and listed in each function's Notes; the tests check each synthesised
section against the scipy prototype through :func:`resplan.noise.nodal.solve_noise`.

Default capacitor: 10 nF (common practice, no source: a value where C0G/film parts
are common and resistors for audio-to-tens-of-kHz corners land in the kΩ range).

References
----------
- S. Butterworth, "On the theory of filter amplifiers", Wireless Engineer 7 (1930) 536.
- W. E. Thomson, "Delay networks having maximally flat frequency characteristics",
  Proc. IEE 96 (1949) 487 (the Bessel–Thomson response).
- R. P. Sallen, E. L. Key, "A practical method of designing RC active filters",
  IRE Trans. Circuit Theory CT-2 (1955) 74 (the Sallen-Key topology).
- The multiple-feedback (infinite-gain, Rauch) low-pass topology: transfer function
  derived here; from memory it is the one tabulated in active-filter textbooks such as
  L. P. Huelsman, P. E. Allen, *Introduction to the Theory and Design of Active
  Filters*, McGraw-Hill 1980.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import cache
from typing import Literal

from ..errors import DesignError
from ..units.formatting import format_si
from .netlist import GROUND, Capacitor, OpAmpModel, Part, Resistor

__all__ = [
    "FilterKind",
    "Section",
    "filter_sections",
    "SallenKeyValues",
    "MultipleFeedbackValues",
    "sallen_key_lowpass",
    "multiple_feedback_lowpass",
    "real_pole_resistance",
    "sallen_key_parts",
    "multiple_feedback_parts",
    "real_pole_parts",
    "lowpass_cascade_parts",
    "DEFAULT_CAPACITOR_F",
    "DEFAULT_GAIN_RESISTOR_OHM",
    "RealPoleValues",
    "section_f0_q",
    "section_parts",
]

FilterKind = Literal["butterworth", "bessel"]

#: Default capacitor of a synthesised section, F (common practice, no source).
DEFAULT_CAPACITOR_F = 10e-9
#: Default RG of a Sallen-Key section's gain-setting divider, Ω (common practice, no source).
DEFAULT_GAIN_RESISTOR_OHM = 10e3
#: Orders with tables.
MAX_ORDER = 8


@dataclass(frozen=True)
class Section:
    """One section of a low-pass cascade, normalised to the filter's −3 dB cutoff.

    Attributes
    ----------
    f0_ratio : float
        Natural frequency of the section over the cutoff of the whole filter.
    q : float or None
        Quality factor; None for the real pole of an odd order.
    """

    f0_ratio: float
    q: float | None

    @property
    def order(self) -> int:
        """1 for a real pole, 2 for a pole pair."""
        return 1 if self.q is None else 2


def _check_kind_order(kind: str, order: int) -> None:
    if kind not in ("butterworth", "bessel"):
        raise DesignError("kind", kind, '"butterworth" or "bessel"')
    if not isinstance(order, int) or isinstance(order, bool) or not 1 <= order <= MAX_ORDER:
        raise DesignError("order", order, f"an integer from 1 to {MAX_ORDER}")


@cache
def _sections(kind: str, order: int) -> tuple[Section, ...]:
    poles = _prototype_poles(kind, order)
    real = [p for p in poles if abs(p.imag) <= 1e-12 * abs(p)]
    pairs = [p for p in poles if p.imag > 1e-12 * abs(p)]
    sections = [Section(float(abs(p)), None) for p in real]
    sections += sorted(
        (Section(float(abs(p)), float(abs(p) / (-2.0 * p.real))) for p in pairs), key=lambda s: s.q
    )
    return tuple(sections)


def _prototype_poles(kind: str, order: int) -> list[complex]:
    """Poles of the low-pass prototype with its −3 dB point at 1 rad/s, from closed forms.

    Butterworth: p_k = exp(jπ(2k + n − 1)/(2n)), k = 1…n (Butterworth 1930). Bessel: the
    roots of the reverse Bessel polynomial θ_n(s) (Thomson 1949), divided by the
    frequency where |θ_n(0)/θ_n(jω)|² = 1/2 so that the whole filter is 3 dB down at 1.
    numpy only: the check path never loads scipy.signal; the tests hold both to
    ``scipy.signal.buttap`` and ``besselap(norm="mag")``.
    """
    import numpy as np

    if kind == "butterworth":
        k = np.arange(1, order + 1)
        return list(np.exp(1j * np.pi * (2 * k + order - 1) / (2 * order)))
    from .responses import _bessel_magnitude_poly, bessel_polynomial

    roots = np.roots(bessel_polynomial(order)[::-1])
    _, w3 = _bessel_magnitude_poly(order)
    return list(roots / w3)


def filter_sections(kind: FilterKind, order: int) -> tuple[Section, ...]:
    """The sections of a Butterworth or Bessel low-pass of order 1–8.

    Parameters
    ----------
    kind : {"butterworth", "bessel"}
        Response. Bessel is normalised to −3 dB at the cutoff (scipy's ``norm="mag"``).
    order : int
        Filter order, 1–8.

    Returns
    -------
    tuple of Section
        The real pole first (odd orders), then the pole pairs by increasing Q
        (an ordering that is common practice, no source: low Q first keeps early
        peaking, and so headroom loss, small).

    Notes
    -----
    Computed once from the closed-form prototype poles (numpy only) and cached;
    the tests check them against :func:`scipy.signal.buttap` and
    :func:`scipy.signal.besselap`. For Butterworth, f₀/f_c = 1 and
    Q_k = 1 / (2 sin((2k − 1)π / 2n))
    (Butterworth 1930), which the tests check.

    Examples
    --------
    >>> [round(s.q, 4) for s in filter_sections("butterworth", 4)]
    [0.5412, 1.3066]
    >>> s = filter_sections("bessel", 2)[0]
    >>> round(s.q, 4), round(s.f0_ratio, 4)
    (0.5774, 1.272)
    """
    _check_kind_order(kind, order)
    return _sections(kind, order)


# ---------------------------------------------------------------------------
# component values


def _check_section(f0_hz: float, q: float, gain: float, capacitor_f: float) -> None:
    for name, value in (("f0_hz", f0_hz), ("q", q), ("capacitor_f", capacitor_f)):
        if (
            not isinstance(value, int | float)
            or isinstance(value, bool)
            or not math.isfinite(value)
            or value <= 0.0
        ):
            raise DesignError(name, value, "a finite number > 0")
    if (
        not isinstance(gain, int | float)
        or isinstance(gain, bool)
        or not math.isfinite(gain)
        or gain < 1.0
    ):
        raise DesignError("gain", gain, "a finite gain ≥ 1 V/V")


@dataclass(frozen=True)
class SallenKeyValues:
    """Component values of a Sallen-Key low-pass section.

    Topology: R1 from the input to node a, R2 from a to the + input (node b),
    C1 from a to the output (feedback), C2 from b to ground; the op amp's gain is
    K = 1 + RF/RG (RF output → − input, RG − input → ground), or a follower when
    K = 1 (``rf_ohm`` and ``rg_ohm`` None). Ω and F.
    """

    r1_ohm: float
    r2_ohm: float
    c1_f: float
    c2_f: float
    gain: float
    rf_ohm: float | None
    rg_ohm: float | None


def sallen_key_lowpass(
    f0_hz: float,
    q: float,
    gain: float = 1.0,
    *,
    capacitor_f: float = DEFAULT_CAPACITOR_F,
    c1_f: float | None = None,
    rg_ohm: float = DEFAULT_GAIN_RESISTOR_OHM,
) -> SallenKeyValues:
    r"""Component values of a Sallen-Key low-pass section for (f₀, Q, gain).

    Parameters
    ----------
    f0_hz : float
        Natural frequency, Hz.
    q : float
        Quality factor.
    gain : float
        DC gain K ≥ 1, V/V.
    capacitor_f : float
        C2 (the capacitor to ground), F.
    c1_f : float, optional
        C1 (the feedback capacitor), F. By default the value that makes R1 = R2.
    rg_ohm : float
        RG of the gain divider when K > 1, Ω.

    Returns
    -------
    SallenKeyValues

    Notes
    -----
    Nodal analysis of the topology in :class:`SallenKeyValues` gives

    .. math:: \frac{v_o}{v_i} = \frac{K}{1 + s\,[C_2(R_1 + R_2) + R_1C_1(1 - K)]
              + s^2 R_1R_2C_1C_2},

    so :math:`\omega_0^2 = 1/(R_1R_2C_1C_2)`. With R1 = R2 = R and m = C1/C2,
    1/Q = (2 + m(1 − K))/√m: for K = 1, m = 4Q² and R = 1/(2Qω₀C₂); for K > 1,
    √m = (−1/Q + √(1/Q² + 8(K − 1))) / (2(K − 1)) and R = 1/(ω₀C₂√m). With C1 given,
    R1 solves a·R1² − R1/(ω₀Q) + C₂/(ω₀²C₁C₂) = 0 with a = C₂ + C₁(1 − K), R2 =
    1/(ω₀²C₁C₂R1); of two positive roots the one with R1/R2 nearer 1 is taken.

    Examples
    --------
    >>> v = sallen_key_lowpass(1e3, 1 / math.sqrt(2))  # unity gain, equal resistors
    >>> round(v.r1_ohm, 3) == round(v.r2_ohm, 3), round(v.c1_f / v.c2_f, 6)
    (True, 2.0)
    """
    _check_section(f0_hz, q, gain, capacitor_f)
    w0 = 2.0 * math.pi * f0_hz
    c2 = capacitor_f
    if c1_f is None:
        if gain == 1.0:
            m = 4.0 * q * q
        else:
            u = (-1.0 / q + math.sqrt(1.0 / q**2 + 8.0 * (gain - 1.0))) / (2.0 * (gain - 1.0))
            m = u * u
        c1 = m * c2
        r1 = r2 = 1.0 / (w0 * c2 * math.sqrt(m))
    else:
        _check_section(f0_hz, q, gain, c1_f)
        c1 = c1_f
        a = c2 + c1 * (1.0 - gain)
        b = 1.0 / (w0 * q)
        p = 1.0 / (w0 * w0 * c1 * c2)
        if abs(a) <= 1e-15 * (c1 + c2):
            roots = [p * c2 / b]
        else:
            disc = b * b - 4.0 * a * p * c2
            if disc < 0.0:
                limit = 4.0 * q * q * c2 / (1.0 + 4.0 * q * q * (gain - 1.0))
                raise DesignError(
                    "c1_f",
                    c1_f,
                    f"C1 ≥ 4Q²·C2 / (1 + 4Q²(K − 1)) = {format_si(limit, 'F')} (no real resistors "
                    "otherwise)",
                )
            roots = [(b + sign * math.sqrt(disc)) / (2.0 * a) for sign in (1.0, -1.0)]
        roots = [r for r in roots if r > 0.0]
        r1 = min(roots, key=lambda r: abs(math.log(r * r / p)))
        r2 = p / r1
    rf = rg = None
    if gain != 1.0:
        rg = float(rg_ohm)
        rf = (gain - 1.0) * rg
    return SallenKeyValues(r1, r2, c1, c2, float(gain), rf, rg)


@dataclass(frozen=True)
class MultipleFeedbackValues:
    """Component values of a multiple-feedback (inverting) low-pass section.

    Topology: R1 from the input to node a, C1 from a to ground, R2 from a to the
    output, R3 from a to the − input (node b), C2 from b to the output; the + input
    is grounded. DC gain −R2/R1 = −``gain``. Ω and F.
    """

    r1_ohm: float
    r2_ohm: float
    r3_ohm: float
    c1_f: float
    c2_f: float
    gain: float


def multiple_feedback_lowpass(
    f0_hz: float,
    q: float,
    gain: float = 1.0,
    *,
    capacitor_f: float = DEFAULT_CAPACITOR_F,
    c1_f: float | None = None,
) -> MultipleFeedbackValues:
    r"""Component values of a multiple-feedback low-pass section for (f₀, Q, |gain|).

    Parameters
    ----------
    f0_hz : float
        Natural frequency, Hz.
    q : float
        Quality factor.
    gain : float
        Magnitude K ≥ 1 of the (inverting) DC gain, V/V.
    capacitor_f : float
        C2 (the feedback capacitor), F.
    c1_f : float, optional
        C1 (the capacitor to ground), F, at least 4Q²(1 + K)·C2; that minimum by default.

    Returns
    -------
    MultipleFeedbackValues

    Notes
    -----
    Nodal analysis of the topology in :class:`MultipleFeedbackValues` gives

    .. math:: \frac{v_o}{v_i} = \frac{-R_2/R_1}{1 + s\,C_2(R_2 + R_3 + R_2R_3/R_1)
              + s^2 R_2R_3C_1C_2}.

    With R1 = R2/K, R2 solves R2² − S·R2 + (1 + K)P = 0, S = 1/(ω₀QC₂),
    P = 1/(ω₀²C₁C₂); real roots need C₁ ≥ 4Q²(1 + K)C₂, and at that minimum the root is
    double: R2 = 1/(2ω₀QC₂), R3 = R2/(1 + K). With a larger C1 the larger root is taken.

    Examples
    --------
    >>> v = multiple_feedback_lowpass(1e3, 1 / math.sqrt(2), gain=2.0)
    >>> round(v.r2_ohm / v.r1_ohm, 9), round(v.c1_f / v.c2_f, 9)
    (2.0, 6.0)
    """
    _check_section(f0_hz, q, gain, capacitor_f)
    w0 = 2.0 * math.pi * f0_hz
    c2 = capacitor_f
    minimum = 4.0 * q * q * (1.0 + gain) * c2
    c1 = minimum if c1_f is None else c1_f
    if c1_f is not None:
        _check_section(f0_hz, q, gain, c1_f)
        if c1_f < minimum * (1.0 - 1e-12):
            raise DesignError(
                "c1_f", c1_f, f"a capacitor ≥ 4Q²(1 + K)·C2 = {format_si(minimum, 'F')}"
            )
    s = 1.0 / (w0 * q * c2)
    p = 1.0 / (w0 * w0 * c1 * c2)
    r2 = 0.5 * (s + math.sqrt(max(0.0, s * s - 4.0 * (1.0 + gain) * p)))
    r3 = p / r2
    return MultipleFeedbackValues(r2 / gain, r2, r3, c1, c2, float(gain))


@dataclass(frozen=True)
class RealPoleValues:
    """A buffered RC real pole: R from the input to node rc, C from rc to ground. Ω and F."""

    r_ohm: float
    c_f: float
    gain: float = 1.0


def section_f0_q(
    values: SallenKeyValues | MultipleFeedbackValues | RealPoleValues,
) -> tuple[float, float | None, float]:
    r"""Natural frequency (Hz), Q (None for a real pole) and DC gain magnitude of a section.

    Read off the denominators in :func:`sallen_key_lowpass` and
    :func:`multiple_feedback_lowpass`, written 1 + b·s + a·s²: ω₀ = 1/√a and
    Q = 1/(ω₀·b). Sallen-Key: a = R1R2C1C2, b = C2(R1 + R2) + R1C1(1 − K);
    multiple-feedback: a = R2R3C1C2, b = C2(R2 + R3 + R2R3/R1); a real pole 1/(2πRC).

    Raises
    ------
    DesignError
        ``q`` when b ≤ 0: the section's poles are in the right half-plane (or on the
        jω axis), a Sallen-Key whose gain K is too high for its capacitors.

    Examples
    --------
    >>> v = sallen_key_lowpass(1e3, 0.7071)
    >>> f0, q, k = section_f0_q(v)
    >>> round(f0, 6), round(q, 6), k
    (1000.0, 0.7071, 1.0)
    """
    if isinstance(values, RealPoleValues):
        return 1.0 / (2.0 * math.pi * values.r_ohm * values.c_f), None, values.gain
    if isinstance(values, SallenKeyValues):
        a = values.r1_ohm * values.r2_ohm * values.c1_f * values.c2_f
        b = values.c2_f * (values.r1_ohm + values.r2_ohm) + values.r1_ohm * values.c1_f * (
            1.0 - values.gain
        )
    else:
        r1, r2, r3 = values.r1_ohm, values.r2_ohm, values.r3_ohm
        a = r2 * r3 * values.c1_f * values.c2_f
        b = values.c2_f * (r2 + r3 + r2 * r3 / r1)
    w0 = 1.0 / math.sqrt(a)
    if not b > 0.0:
        raise DesignError(
            "q",
            "a pole pair in the right half-plane" if b < 0 else "a pole pair on the jω axis",
            "a stable section: C2·(R1 + R2) > R1·C1·(K − 1) (a lower gain K = 1 + RF/RG or a "
            "smaller C1)",
        )
    return w0 / (2.0 * math.pi), 1.0 / (w0 * b), values.gain


def section_parts(
    prefix: str,
    values: SallenKeyValues | MultipleFeedbackValues | RealPoleValues,
    node_in: str,
    node_out: str,
    opamp: OpAmpModel,
) -> tuple[Part, ...]:
    """Parts of one section given by its values (a real pole is buffered by a follower)."""
    if isinstance(values, SallenKeyValues):
        return sallen_key_parts(prefix, values, node_in, node_out, opamp)
    if isinstance(values, MultipleFeedbackValues):
        return multiple_feedback_parts(prefix, values, node_in, node_out, opamp)
    return real_pole_parts(prefix, values.r_ohm, values.c_f, node_in, node_out, opamp)


def real_pole_resistance(f0_hz: float, capacitor_f: float = DEFAULT_CAPACITOR_F) -> float:
    """Resistance of an RC real pole at f₀: R = 1/(2π f₀ C), Ω.

    Examples
    --------
    >>> round(real_pole_resistance(1e3, 1e-6), 6)
    159.154943
    """
    _check_section(f0_hz, 1.0, 1.0, capacitor_f)
    return 1.0 / (2.0 * math.pi * f0_hz * capacitor_f)


# ---------------------------------------------------------------------------
# sections as netlist parts


def sallen_key_parts(
    prefix: str, values: SallenKeyValues, node_in: str, node_out: str, opamp: OpAmpModel
) -> tuple[Part, ...]:
    """Parts of a Sallen-Key section (see :class:`SallenKeyValues`), named under ``prefix``.

    Internal nodes are ``"<prefix>.a"``, ``"<prefix>.b"`` and (K > 1) ``"<prefix>.fb"``;
    the op amp is ``"<prefix>.opamp"``.
    """
    a, b = f"{prefix}.a", f"{prefix}.b"
    minus = node_out
    parts: list[Part] = [
        Resistor(f"{prefix}.R1", node_in, a, values.r1_ohm),
        Resistor(f"{prefix}.R2", a, b, values.r2_ohm),
        Capacitor(f"{prefix}.C1", a, node_out, values.c1_f),
        Capacitor(f"{prefix}.C2", b, GROUND, values.c2_f),
    ]
    if values.rf_ohm is not None and values.rg_ohm is not None:
        minus = f"{prefix}.fb"
        parts += [
            Resistor(f"{prefix}.RF", node_out, minus, values.rf_ohm),
            Resistor(f"{prefix}.RG", minus, GROUND, values.rg_ohm),
        ]
    return (*parts, *opamp.parts(f"{prefix}.opamp", b, minus, node_out))


def multiple_feedback_parts(
    prefix: str, values: MultipleFeedbackValues, node_in: str, node_out: str, opamp: OpAmpModel
) -> tuple[Part, ...]:
    """Parts of a multiple-feedback section (see :class:`MultipleFeedbackValues`).

    Internal nodes are ``"<prefix>.a"`` and ``"<prefix>.b"``; the op amp is
    ``"<prefix>.opamp"``.
    """
    a, b = f"{prefix}.a", f"{prefix}.b"
    return (
        Resistor(f"{prefix}.R1", node_in, a, values.r1_ohm),
        Capacitor(f"{prefix}.C1", a, GROUND, values.c1_f),
        Resistor(f"{prefix}.R2", a, node_out, values.r2_ohm),
        Resistor(f"{prefix}.R3", a, b, values.r3_ohm),
        Capacitor(f"{prefix}.C2", b, node_out, values.c2_f),
        *opamp.parts(f"{prefix}.opamp", GROUND, b, node_out),
    )


def real_pole_parts(
    prefix: str,
    resistance_ohm: float,
    capacitance_f: float,
    node_in: str,
    node_out: str,
    opamp: OpAmpModel | None = None,
) -> tuple[Part, ...]:
    """An RC real pole, buffered by a follower ``"<prefix>.opamp"`` when ``opamp`` is given."""
    node_rc = node_out if opamp is None else f"{prefix}.rc"
    parts: tuple[Part, ...] = (
        Resistor(f"{prefix}.R1", node_in, node_rc, resistance_ohm),
        Capacitor(f"{prefix}.C1", node_rc, GROUND, capacitance_f),
    )
    if opamp is not None:
        parts += opamp.parts(f"{prefix}.opamp", node_rc, node_out, node_out)
    return parts


def lowpass_cascade_parts(
    prefix: str,
    kind: FilterKind,
    order: int,
    cutoff_hz: float,
    node_in: str,
    node_out: str,
    opamp: OpAmpModel,
    *,
    topology: Literal["sallen-key", "multiple-feedback"] = "sallen-key",
    capacitor_f: float = DEFAULT_CAPACITOR_F,
) -> tuple[Part, ...]:
    """A unity-gain Butterworth or Bessel low-pass cascade as parts.

    Sections follow :func:`filter_sections`; section ``i`` is named
    ``"<prefix>.sections[i]"`` and the node after it ``"<prefix>.n<i>"`` (the last is
    ``node_out``). A real pole is buffered. Multiple-feedback sections invert, so an
    odd number of them inverts the whole cascade.
    """
    if (
        not isinstance(cutoff_hz, int | float)
        or isinstance(cutoff_hz, bool)
        or not math.isfinite(cutoff_hz)
        or cutoff_hz <= 0.0
    ):
        raise DesignError("cutoff_hz", cutoff_hz, "a finite frequency > 0 Hz")
    if topology not in ("sallen-key", "multiple-feedback"):
        raise DesignError("topology", topology, '"sallen-key" or "multiple-feedback"')
    sections = filter_sections(kind, order)
    parts: list[Part] = []
    node = node_in
    for i, section in enumerate(sections):
        name = f"{prefix}.sections[{i}]"
        nxt = node_out if i == len(sections) - 1 else f"{prefix}.n{i}"
        f0 = section.f0_ratio * cutoff_hz
        if section.q is None:
            parts += real_pole_parts(
                name, real_pole_resistance(f0, capacitor_f), capacitor_f, node, nxt, opamp
            )
        elif topology == "sallen-key":
            parts += sallen_key_parts(
                name, sallen_key_lowpass(f0, section.q, capacitor_f=capacitor_f), node, nxt, opamp
            )
        else:
            parts += multiple_feedback_parts(
                name,
                multiple_feedback_lowpass(f0, section.q, capacitor_f=capacitor_f),
                node,
                nxt,
                opamp,
            )
        node = nxt
    return tuple(parts)
