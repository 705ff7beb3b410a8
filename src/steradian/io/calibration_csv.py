"""Channel calibration CSV files: the measured response of each beamformer channel.

Layout (``#`` comment lines and blank lines ignored)::

    # measured channel response relative to nominal
    element,gain_db,phase_deg
    0,0.21,-3.4
    1,-0.08,1.9

Named by ``calibration_file`` of a design's ``[channel]`` table
(:func:`steradian.quantize.channel_from_table`).
"""

from __future__ import annotations

import numpy as np

from ..errors import FileFormatError
from ..units import from_db20
from .csv_table import check_columns, parse_float, parse_index, read_table

__all__ = ["read_calibration", "CALIBRATION_COLUMNS", "MAX_GAIN_DB"]

CALIBRATION_COLUMNS = ("element", "gain_db", "phase_deg")
"""The columns of a calibration file (all required, any order)."""


MAX_GAIN_DB = 200.0
"""Largest calibration gain magnitude read (dB): channels differ from nominal by tens of dB
at most (common practice); beyond 200 dB the value is a slip, and past ~6,000 dB the linear
factor overflows."""


def read_calibration(path, n: int | None = None) -> np.ndarray:
    """Per-channel complex calibration from a CSV file.

    Each element 0 .. N-1 exactly once, in any order. ``gain_db`` and ``phase_deg`` are the
    measured response of the channel relative to nominal; the returned factor is
    ``10**(gain_db/20) * exp(j phase_deg)``.

    Raises
    ------
    FileFormatError
        Naming the line for a bad number, a duplicate or missing element, or a wrong count.
    """
    header, rows, hline, _ = read_table(
        path, n, "" if n is None else f" (the array has {n} elements)")
    col = check_columns(path, header, CALIBRATION_COLUMNS, CALIBRATION_COLUMNS, hline)
    if not rows:
        raise FileFormatError(path, "no calibration rows (need a header line "
                              "'element,gain_db,phase_deg' and one row per element)")
    m = len(rows)
    if n is not None and m != n:
        raise FileFormatError(path, f"has {m} channel rows, the array has {n} elements")
    cal = np.zeros(m, complex)
    seen: dict[int, int] = {}
    for lineno, f in rows:
        i = parse_index(path, lineno, "element", f[col["element"]], m)
        if i in seen:
            raise FileFormatError(path, f"element {i} appears twice (first on line "
                                  f"{seen[i]})", lineno)
        seen[i] = lineno
        g, ph = (parse_float(path, lineno, c, f[col[c]]) for c in ("gain_db", "phase_deg"))
        if abs(g) > MAX_GAIN_DB:
            raise FileFormatError(path, f"column 'gain_db': {g:g} dB is beyond +-{MAX_GAIN_DB:g}"
                                  " dB (not a measured channel response)", lineno)
        cal[i] = from_db20(g) * np.exp(1j * np.deg2rad(ph))
    return cal
