"""Spread: worst case, Monte Carlo yield and what to improve first.

:mod:`resplan.spread.model` writes the budget as fixed integrals times factors of
the spread figures; :mod:`resplan.spread.trials` samples and judges boards;
:mod:`resplan.spread.corner` builds the worst-case corner;
:mod:`resplan.spread.improve` ranks the figures by the bits a 10 % better one gains.
"""
