"""Noise physics and linear circuits: circuits as data (:mod:`resplan.noise.netlist`),
their exact solution by modified nodal analysis (:mod:`resplan.noise.nodal`), and
the filter-section tables and component synthesis (:mod:`resplan.noise.sections`).
"""
