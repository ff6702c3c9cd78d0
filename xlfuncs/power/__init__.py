"""Three-phase harmonic studies from equipment ratings, on the core solver.

An equipment table (one row per supply, transformer, cable, capacitor, filter, motor, load
or converter) is expanded into per-phase fundamental, positive-, negative- and
zero-sequence networks — ordinary parts tables, in ohms at each item's voltage — with the
phase shifts of the transformers' vector groups carried by zone frames, and solved by the
core. See docs/THREE_PHASE.md for the tables, the models and their sources.

>>> from xlfuncs.power import harmonic_study
>>> eq = [["name", "kind", "bus", "kv", "mva_sc", "x_r", "kvar", "connection"],
...       ["U1", "supply", "B1", 13.8, 125, 1e4, None, None],
...       ["C1", "capacitor", "B1", 13.8, None, None, 5000, "Y"]]
>>> st = harmonic_study(eq, options={"fundamental_hz": 60})
>>> [round(r.order, 4) for r in st.resonances("B1") if r.kind == "parallel"]
[5.0]
"""

from .study import (
    CAUTION,
    NOT_MODELLED,
    ExpandedNetwork,
    FundamentalResults,
    HarmonicStudy,
    expand_network,
    harmonic_study,
    ideal_spectrum,
    parse_sequence,
    sequence_impedance,
    sequence_resonances,
)
from .tables import (
    Equipment,
    Item,
    PowerOptions,
    Spectra,
    SpectrumLine,
    read_equipment,
    read_power_options,
    read_spectra,
)
from .vector_group import VectorGroup, parse_vector_group, sequence_of

__all__ = [
    "CAUTION",
    "NOT_MODELLED",
    "Equipment",
    "ExpandedNetwork",
    "FundamentalResults",
    "HarmonicStudy",
    "Item",
    "PowerOptions",
    "Spectra",
    "SpectrumLine",
    "VectorGroup",
    "expand_network",
    "harmonic_study",
    "ideal_spectrum",
    "parse_sequence",
    "parse_vector_group",
    "read_equipment",
    "read_power_options",
    "read_spectra",
    "sequence_impedance",
    "sequence_of",
    "sequence_resonances",
]
