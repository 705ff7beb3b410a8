"""steradian: phased-array analysis and design.

Element pattern x array factor over arbitrary positions and weights; spherical integration
for radiated power, directivity and gain; pattern metrics; tapers and synthesis; quantized
beam tables for beamformer firmware.

Conventions: right-handed x, y, z; planar arrays in the x-y plane, broadside +z; theta from
+z, phi from +x toward +y; time dependence exp(+j w t); AF = sum_n w_n exp(+j k r . r_n).
"""

from __future__ import annotations

from importlib import import_module
from typing import TYPE_CHECKING

from .units import C0
from .version import VERSION as __version__

if TYPE_CHECKING:
    from . import optimize, tapers
    from .array import Array, Steering, direction
    from .beamtable import BeamEvaluator, BeamTable, build_beam_table, verify_beam_table
    from .directions import (
        Directions,
        ThetaPhiGrid,
        UVGrid,
        az_el_directions,
        theta_phi_directions,
    )
    from .elements import (
        CosinePower,
        Dipole,
        Element,
        HalfWaveDipole,
        Isotropic,
        Patch,
        ShortDipole,
        TabulatedElement,
    )
    from .engine import Field, field
    from .errors import DesignError, FileFormatError, SteradianError
    from .geometry import (
        Geometry,
        concentric_rings,
        linear,
        rectangular,
        ring,
        rotation_to,
        triangular,
    )
    from .io.design import Design, design_from_dict, load_design
    from .io.element_table import read_element_table, write_element_table
    from .io.formats import read_weight_file, write_weight_file
    from .io.positions_csv import read_positions, write_positions
    from .io.weights_csv import read_weights, write_weights
    from .metrics import Cut, PatternMetrics, cut, pattern_metrics, principal_cuts
    from .optimize import (
        SynthesisInfeasible,
        SynthesisResult,
        max_directivity,
        max_worst_directivity,
        min_sidelobe,
        phase_only,
        synthesize,
        thin,
        tradeoff,
    )
    from .quantize import ChannelModel, StateMap
    from .radiation import (
        beam_solid_angle,
        directivity,
        eirp,
        gain,
        peak_directivity,
        radiated_power,
        realized_gain,
        taper_efficiency,
    )
    from .workflows import analyze_design, beam_table_from_design, verify_weight_file


# Public names are imported on first use (PEP 562), so a process that needs one part (a
# study worker, ``steradian --help``) does not pay for importing every other part: each
# public name by its home module, and the public subpackages.
_HOMES = {
    ".array": ("Array", "Steering", "direction"),
    ".beamtable": ("BeamEvaluator", "BeamTable", "build_beam_table", "verify_beam_table"),
    ".directions": ("Directions", "ThetaPhiGrid", "UVGrid", "az_el_directions",
                    "theta_phi_directions"),
    ".elements": ("CosinePower", "Dipole", "Element", "HalfWaveDipole", "Isotropic", "Patch",
                  "ShortDipole", "TabulatedElement"),
    ".engine": ("Field", "field"),
    ".errors": ("DesignError", "FileFormatError", "SteradianError"),
    ".geometry": ("Geometry", "concentric_rings", "linear", "rectangular", "ring", "rotation_to",
                  "triangular"),
    ".io.design": ("Design", "design_from_dict", "load_design"),
    ".io.element_table": ("read_element_table", "write_element_table"),
    ".io.formats": ("read_weight_file", "write_weight_file"),
    ".io.positions_csv": ("read_positions", "write_positions"),
    ".io.weights_csv": ("read_weights", "write_weights"),
    ".metrics": ("Cut", "PatternMetrics", "cut", "pattern_metrics", "principal_cuts"),
    ".optimize": ("SynthesisInfeasible", "SynthesisResult", "max_directivity",
                  "max_worst_directivity", "min_sidelobe", "phase_only", "synthesize", "thin",
                  "tradeoff"),
    ".quantize": ("ChannelModel", "StateMap"),
    ".radiation": ("beam_solid_angle", "directivity", "eirp", "gain", "peak_directivity",
                   "radiated_power", "realized_gain", "taper_efficiency"),
    ".workflows": ("analyze_design", "beam_table_from_design", "verify_weight_file"),
}
_SUBPACKAGES = ("optimize", "tapers")
_LAZY = {name: (home, name) for home, names in _HOMES.items() for name in names}
_LAZY.update({name: (f".{name}", None) for name in _SUBPACKAGES})


def __getattr__(name: str):
    try:
        module, attr = _LAZY[name]
    except KeyError:
        raise AttributeError(f"module 'steradian' has no attribute {name!r}") from None
    value = import_module(module, __name__)
    value = value if attr is None else getattr(value, attr)
    globals()[name] = value
    return value


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(__all__))


__all__ = [
    "__version__", "C0",
    "Array", "Steering", "direction",
    "Element", "Isotropic", "CosinePower", "Dipole", "ShortDipole", "HalfWaveDipole",
    "Patch", "TabulatedElement", "read_element_table", "write_element_table",
    "Field", "field",
    "SteradianError", "DesignError", "FileFormatError",
    "Geometry", "linear", "rectangular", "triangular", "ring", "concentric_rings",
    "rotation_to",
    "Directions", "ThetaPhiGrid", "UVGrid",
    "radiated_power", "directivity", "peak_directivity", "beam_solid_angle",
    "taper_efficiency", "gain", "realized_gain", "eirp",
]
__all__ += ["Cut", "PatternMetrics", "cut", "pattern_metrics", "principal_cuts"]
__all__ += ["ChannelModel", "StateMap", "BeamTable", "BeamEvaluator", "build_beam_table",
            "verify_beam_table", "beam_table_from_design", "verify_weight_file", "analyze_design",
            "read_weight_file", "write_weight_file", "theta_phi_directions",
            "az_el_directions"]
__all__ += ["Design", "load_design", "design_from_dict", "read_positions", "write_positions",
            "read_weights", "write_weights"]
__all__ += ["tapers", "optimize", "max_directivity", "max_worst_directivity", "min_sidelobe",
            "tradeoff", "phase_only", "thin", "synthesize", "SynthesisResult",
            "SynthesisInfeasible"]
