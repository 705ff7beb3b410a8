r"""Coupled synthesis in current space: the optimizer sees an ordinary array and a power
matrix.

With embedded patterns given by element currents :math:`I = T a`, the field is linear in I
through the array's own (isolated) responses, so every sidelobe, mask and null constraint of
the convex optimizer applies to I unchanged. The available power is
:math:`a^H a = I^H T^{-H} T^{-1} I`; in engine units (divided by the model's intensity
scale) it is the matrix :math:`P = T^{-H} T^{-1} / \mathrm{scale}`, and
:math:`4\pi |E_0|^2 / I^H P I` is the realized gain. Passing P as ``power_matrix`` to
:func:`steradian.optimize.max_directivity` therefore maximises realized gain under the same
pattern limits; the port waves are :math:`a = T^{-1} I`.

Limits that act on the weights themselves (dynamic range, white-noise gain) then act on the
currents, not on the port waves.

References
----------
D. M. Pozar, "The active element pattern," IEEE Trans. Antennas Propag., vol. 42, no. 8,
pp. 1176-1178, 1994.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from ..errors import SteradianError
from ._figures import realized_gain_toward

__all__ = ["CoupledProblem", "coupled_problem"]


@dataclass(frozen=True, eq=False)
class CoupledProblem:
    """Inputs of a coupled synthesis and the way back to port waves.

    Attributes
    ----------
    array : Array
        The array radiating the element currents: the input's geometry, element and steering
        (the beam), no taper and no mask.
    power_matrix : ndarray (N, N)
        Available power in engine units, :math:`T^{-H} T^{-1} / scale`.
    coupling : Coupling
    """

    array: object
    power_matrix: np.ndarray
    coupling: object
    source: object

    def waves(self, currents) -> np.ndarray:
        """Port waves a = T^-1 I of element currents (the optimizer's weights)."""
        return np.linalg.solve(self.coupling.currents, np.asarray(currents, complex))

    def realized_gain(self, waves, vectors=None) -> np.ndarray:
        """Realized gain (linear) of port waves toward ``vectors`` (default the beam)."""
        v = (self.array.steering.unit[None, :] if vectors is None
             else np.atleast_2d(vectors))
        a = np.asarray(waves, complex).reshape(self.coupling.n, -1)
        if a.shape[1] == 1 and len(v) > 1:
            a = np.repeat(a, len(v), axis=1)
        return realized_gain_toward(self.source, self.coupling, a, v)


def coupled_problem(array, coupling) -> CoupledProblem:
    """The current-space inputs of a synthesis that maximises realized gain.

    ``array`` gives geometry, element and the beam direction (its steering); every element
    must be enabled (a terminated port is not a linear constraint on the currents).

    Example
    -------
    >>> cp = coupled_problem(array, coupling)                    # doctest: +SKIP
    >>> res = max_directivity(cp.array, psl_db=-25, power_matrix=cp.power_matrix)
    >>> a = cp.waves(res.weights); g = cp.realized_gain(a)
    """
    if coupling.currents is None:
        raise SteradianError("coupled synthesis needs embedded element patterns (a coupling "
                             "model with element currents, e.g. model = 'dipole')")
    if array.steering is None:
        raise SteradianError("coupled synthesis: give the array a steering (the beam)")
    if array.enabled is not None and not np.all(array.enabled):
        raise SteradianError("coupled synthesis: every port must be driven (disabled "
                             "elements are not supported)")
    Ti = np.linalg.inv(coupling.currents)
    P = Ti.conj().T @ Ti / coupling.scale
    P = 0.5 * (P + P.conj().T)
    cur = replace(array, taper=None, enabled=None)
    return CoupledProblem(cur, P, coupling, replace(array, taper=None, steering=None,
                                                    enabled=None))
