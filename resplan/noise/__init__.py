"""Noise physics: source densities, filter responses and the noise integrals.

Thermal, shot and 1/f + white densities and how they combine (``physics``),
analog low-pass prototypes and digital decimation filters (``responses``), and
equivalent noise bandwidths and aliasing integrals through them (``bandwidth``).
Everything is SI and vectorised over numpy frequency axes. This layer knows
nothing of chains, design files, plans or output: it imports only
:mod:`resplan.errors` and :mod:`resplan.units`.
"""
