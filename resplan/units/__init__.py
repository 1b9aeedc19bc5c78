"""Units at the edges: reading quantities as people write them, writing them back.

``parse`` turns a string with a unit ("4 nV/√Hz", "350 ohm") into an SI float,
``tables`` holds the exact values of common unit expressions so start-up needs no
pint, and ``formatting`` writes SI floats with engineering prefixes, dB, bits and
counts. This layer sits at the bottom beside :mod:`resplan.errors`: it may import
only the standard library, numpy, pint and :mod:`resplan.errors`; every other
layer may import it.
"""
