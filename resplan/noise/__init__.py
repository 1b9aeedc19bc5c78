"""Noise physics: source densities, filter responses, circuits and the noise integrals.

Thermal, shot and 1/f + white densities and how they combine (``physics``),
analog low-pass prototypes and digital decimation filters (``responses``),
equivalent noise bandwidths and aliasing integrals through them (``bandwidth``),
and any linear circuit as data (``netlist``) solved by modified nodal analysis for
the transfer from every noise source to the output (``nodal``), with the active
filter section tables (``sections``). Everything is SI and vectorised over numpy
frequency axes. This layer knows nothing of chains, design files, plans or output:
it imports only :mod:`resplan.errors` and :mod:`resplan.units`.
"""
