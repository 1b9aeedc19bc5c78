"""The measurement chain and its forward budget.

The parts as self-validating frozen dataclasses (``stages``, ``converter``), the
whole chain with its band and temperature (``signal_chain``), the requirement
(``requirement``) and the resolution figures (``resolution``), the forward noise
budget referred to the sensor (``budget``), aliasing interferers (``alias``) and
a design as loaded, with parts that may still be open (``design``). It may import
:mod:`resplan.noise`, :mod:`resplan.units` and :mod:`resplan.errors`, never the
plan, design-file or output layers.
"""
