"""Beam-direction CSV files: one steering direction per row.

Layout (``#`` comment lines and blank lines ignored)::

    theta_deg,phi_deg
    0,0
    30,90

or ``az_deg,el_deg`` (azimuth-elevation, see :func:`steradian.directions.az_el_to_theta_phi`);
one pair of columns, in any order. Named by ``file`` of a design's ``[beams]`` table with
``grid = "list"``.
"""

from __future__ import annotations

import numpy as np

from ..directions import az_el_to_theta_phi
from ..errors import FileFormatError
from .csv_table import parse_float, read_table

__all__ = ["read_directions"]

_PAIRS = ({"theta_deg", "phi_deg"}, {"az_deg", "el_deg"})


def read_directions(path) -> np.ndarray:
    """Beam directions from a CSV file, shape (B, 2) as (theta_deg, phi_deg).

    Columns ``theta_deg,phi_deg`` or ``az_deg,el_deg`` (one pair, any order; ``#`` comment
    lines and blank lines ignored).

    Raises
    ------
    FileFormatError
        Naming the line: other columns, a field that is not a finite number, theta outside
        [0, 180] or elevation outside [-90, 90], or no rows.
    """
    header, rows, header_line, _ = read_table(path)
    if set(header) not in _PAIRS or len(header) != 2:
        raise FileFormatError(path, f"columns must be theta_deg,phi_deg or az_deg,el_deg, got "
                              f"{','.join(header)}", header_line)
    vals = []
    for lineno, fields in rows:
        v = {h: parse_float(path, lineno, h, f) for h, f in zip(header, fields, strict=True)}
        if "theta_deg" in v and not 0 <= v["theta_deg"] <= 180:
            raise FileFormatError(path, f"theta_deg {v['theta_deg']} is outside [0, 180]",
                                  lineno)
        if "el_deg" in v and abs(v["el_deg"]) > 90:
            raise FileFormatError(path, f"el_deg {v['el_deg']} is outside [-90, 90]", lineno)
        vals.append(v)
    if not vals:
        raise FileFormatError(path, "no directions (need a header and one row per beam)")
    if "theta_deg" in header:
        return np.array([[v["theta_deg"], v["phi_deg"]] for v in vals], float)
    t, p = az_el_to_theta_phi([v["az_deg"] for v in vals], [v["el_deg"] for v in vals])
    return np.column_stack([t, p])
