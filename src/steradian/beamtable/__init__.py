r"""Beam tables: steering grids, quantized weights per beam, and their re-evaluation.

A beam table is what a beamformer loads: for each steering direction, one hardware state
per element. :func:`build_beam_table` computes each beam's ideal weights (the array's taper,
or any weights you supply, steered), rounds them with a :class:`~steradian.quantize.ChannelModel`
and re-evaluates what the quantized beam really radiates. :func:`verify_beam_table` checks a
table read from a file before it reaches hardware: it rebuilds the design's table, compares
every beam's direction and every element's state with the file (the first difference in one
line, :attr:`Verification.first_difference`) and re-evaluates the file's beams. Weight files
are read and written by :mod:`steradian.io.formats`; the design-file recipes (a design's beam
table, verifying a file against a design) are in :mod:`steradian.workflows`.

Per beam the evaluation reports (levels in dB, angles in degrees):

- ``directivity_dbi``, ``gain_dbi``: peak directivity of the realised beam and gain
  :math:`G = \xi D` with the radiation efficiency :math:`\xi` given;
- ``peak_theta_deg``, ``peak_phi_deg`` and ``pointing_error_deg``: the refined peak and its
  angle from the commanded direction (for a collinear array of isotropic elements, the error
  of the cone angle from the array axis);
- ``psl_db``: highest sidelobe (any local maximum outside the main lobe, quantization and
  grating lobes included) relative to the peak;
- ``qlobe_db``: *quantization-lobe level*, the peak of the pattern radiated by the
  quantization error alone, :math:`e = w_q - s\,w_0` with :math:`s = w_0^H w_q / w_0^H w_0`
  the least-squares scale of the ideal weights :math:`w_0`, relative to the realised peak;
- ``ideal_directivity_dbi``, ``ideal_psl_db``, ``ideal_pointing_error_deg`` and ``loss_db``:
  the ideal beam's peak directivity, sidelobe level and pointing error, and the directivity
  lost to quantization (ideal minus realised peak directivity);
- ``rms_phase_error_deg``: RMS phase difference between realised and best-fit ideal weights;
- ``null_depth_db``: for a difference beam (:attr:`BeamTable.kinds`), the level at the
  commanded direction relative to its peak (NaN for sum beams). A difference beam's
  ``psl_db`` is its difference sidelobe level and its pointing error is NaN (see
  :class:`BeamMetrics`).

A table may hold several beam kinds per direction (``kinds`` of :func:`build_beam_table`):
one beam per direction and kind, direction-major, kind-minor; a difference beam's weights are
the sum weights times :func:`difference_signs`.

Speed: work that does not depend on the weights is done once per array by
:class:`BeamEvaluator`: the radiated-power matrix :math:`Q` (so :math:`P = w^H Q w` per
beam), and the element responses on a search set of directions (so every beam's pattern on
it is one matrix product). Peaks and lobes are then found by the package's one lobe search
(:mod:`steradian.sphere`): local maxima of every beam's samples, ranked by a one-stencil
estimate, refined together by a safeguarded Newton ascent.

Direction conventions: theta from +z, phi from +x toward +y. Azimuth-elevation grids use
:math:`\hat r = (\cos el \sin az,\ \sin el,\ \cos el \cos az)`: azimuth turns from +z toward
+x in the x-z plane, elevation lifts toward +y, so (0, 0) is broadside of a planar array.
"""

from __future__ import annotations

from ..directions import az_el_directions, az_el_to_theta_phi, theta_phi_directions
from ..units import DB_FLOOR
from ._build import (
    BeamBuild,
    build_beam_table,
    difference_signs,
    expand_kinds,
    steered_weights,
)
from ._evaluate import BeamEvaluator
from ._grids import BEAMS_KEYS, beam_kinds_from_table, beams_from_table, span
from ._metrics import BeamMetrics
from ._table import BEAM_KINDS, IQ_SCALE, BeamTable, Encoding, jsonable
from ._verify import Verification, verify_beam_table

__all__ = [
    "BeamTable",
    "BeamMetrics",
    "BeamBuild",
    "Verification",
    "BeamEvaluator",
    "Encoding",
    "IQ_SCALE",
    "BEAM_KINDS",
    "DB_FLOOR",
    "jsonable",
    "span",
    "theta_phi_directions",
    "az_el_directions",
    "az_el_to_theta_phi",
    "beams_from_table",
    "beam_kinds_from_table",
    "difference_signs",
    "expand_kinds",
    "BEAMS_KEYS",
    "steered_weights",
    "build_beam_table",
    "verify_beam_table",
]
