"""Design files: TOML text → checked tables → SI objects of :mod:`resplan.chain`.

The pydantic models of the tables and their JSON Schema (``models``), structure
problems reported one line each (``structure``), the front-end tables — the
requirement, the sensor and the analog stages (``parts``) — and the converter
side — reference, ADC, digital path, band (``converter``), the loader that ties
them together (``load``) and the embedded examples (``examples``). It may import
:mod:`resplan.chain` and the layers below it, never the plan or output layers.
"""
