"""Output: what people read — text tables, JSON data, figures and the PDF report.

The forward budget and the plan as text and plain data (``budget_text``,
``plan_text``), curves for figures (``spectra``), the figures themselves
(``figures``), the PDF requirements appendix (``report``) and the atomic writer
every output file goes through (``atomic``). It may import every layer below it
(plan, design files, chain, noise, units); only the command line imports it.
matplotlib and reportlab are imported lazily, inside the functions that draw.
"""
