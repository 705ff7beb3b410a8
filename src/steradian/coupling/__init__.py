"""Mutual coupling: scattering matrices, embedded element patterns, active reflection and
realized gain over scan.

- ``_emf``: self and mutual impedance of parallel thin dipoles (induced EMF, sine and cosine
  integrals), side by side, collinear and in echelon.
- ``_network``: Z <-> S with a reference resistance per port (power waves), feed currents,
  active reflection, VSWR, accepted power a^H (I - S^H S) a, reciprocity and passivity.
- ``_model``: :class:`Coupling` (S at one frequency, optionally the wave-to-current matrix
  that gives the embedded patterns) and its builders (:func:`dipole_coupling`,
  :func:`scattering_coupling`).
- ``_embedded``: tabulated embedded patterns per element or per class (centre, edge,
  corner), levelled by each port's lossless balance (:func:`embedded_coupling`).
- ``_figures``: scan maps (active VSWR, accepted power, realized gain, blindness), realized
  gain toward directions, maximum-realized-gain weights, the power balance.
- ``_synthesis``: :func:`coupled_problem`, the current-space inputs (array + available-power
  matrix) of :func:`steradian.optimize.max_directivity` maximising realized gain.
- ``_table``: the ``[coupling]`` design table and the coupled block of ``analyze``.

Layer: above ``analysis`` (uses the array, engine and radiation); files (Touchstone) are
read by :mod:`steradian.io.touchstone` and passed in.
"""

from ._embedded import (
    CLASS_NAMES,
    EmbeddedPatterns,
    element_classes,
    embedded_coupling,
    embedded_power_matrix,
    embedded_responses,
)
from ._emf import FILAMENT_RHO, TOUCH, mutual_impedance, self_impedance
from ._figures import (
    BLIND_GAMMA,
    ScanMap,
    coupled_beam_weights,
    current_array,
    max_realized_gain_weights,
    power_balance,
    realized_gain_toward,
    scan_excitations,
    scan_map,
    uncoupled_optimum_weights,
)
from ._model import Coupling, dipole_coupling, dipole_impedance_matrix, scattering_coupling
from ._network import (
    accepted_power,
    accepted_power_matrix,
    active_reflection,
    feed_currents,
    passivity_margin,
    reciprocity_error,
    reference_resistances,
    s_to_z,
    vswr,
    z_to_s,
)
from ._synthesis import CoupledProblem, coupled_problem
from ._table import (
    KEYS,
    CouplingSpec,
    coupled_summary,
    coupling_of,
    coupling_spec,
    interpolate_frequency,
)

__all__ = [
    "Coupling", "CouplingSpec", "ScanMap", "BLIND_GAMMA", "FILAMENT_RHO", "TOUCH", "KEYS",
    "mutual_impedance", "self_impedance", "dipole_impedance_matrix", "dipole_coupling",
    "scattering_coupling", "z_to_s", "s_to_z", "feed_currents", "reference_resistances",
    "active_reflection", "vswr", "accepted_power", "accepted_power_matrix",
    "reciprocity_error", "passivity_margin", "scan_excitations", "scan_map",
    "realized_gain_toward", "max_realized_gain_weights", "uncoupled_optimum_weights",
    "coupled_beam_weights", "power_balance", "current_array",
    "coupling_spec", "coupling_of", "coupled_summary", "interpolate_frequency",
    "CoupledProblem", "coupled_problem", "CLASS_NAMES", "EmbeddedPatterns",
    "element_classes", "embedded_coupling", "embedded_power_matrix", "embedded_responses",
]
