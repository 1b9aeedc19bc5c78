"""Working backward: from the requirement to a limit for every open part.

The allocation of the allowed noise among the open parts (``allocation``), the
provisional chain that stands in for the open parts (``provisional``), the
data-sheet figures each share turns into (``limits``) and the levers that would
make an infeasible plan feasible (``levers``). It may import :mod:`resplan.chain`
and the layers below it; it knows nothing of design files or output.
"""
