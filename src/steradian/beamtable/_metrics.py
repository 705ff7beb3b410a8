"""Part of :mod:`steradian.beamtable` (see the package docstring): the per-beam metrics of a
table (the value the evaluator returns, its rows and its worst-case summary)."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ._table import jsonable

METRIC_FIELDS = ("theta_deg", "phi_deg", "peak_theta_deg", "peak_phi_deg", "directivity_dbi",
                  "gain_dbi", "pointing_error_deg", "psl_db", "qlobe_db",
                  "ideal_directivity_dbi", "ideal_psl_db", "ideal_pointing_error_deg", "loss_db",
                  "rms_phase_error_deg", "drive_loss_db", "radiated_power_db", "eirp_dbw",
                  "null_depth_db", "monopulse_slope_per_deg", "realized_gain_dbi")
"""Names of the per-beam metrics, in report order."""


@dataclass(frozen=True, eq=False)
class BeamMetrics:
    r"""Per-beam metrics of a beam table, each an array of shape (B,) (see the module notes).

    ``qlobe_db``, ``ideal_*``, ``loss_db`` and ``rms_phase_error_deg`` are NaN when no ideal
    weights were given.

    Power (weights in full-scale units, 1 = a channel at full drive; N all elements):

    - ``drive_loss_db``: commanded amplitude loss relative to full drive,
      :math:`-10\log_{10}(\sum_n |c_n|^2 / N)` of the commanded states (taper loss plus the
      gain offset and disabled elements; NaN when the commanded states were not given);
    - ``radiated_power_db``: radiated power relative to all N channels at full drive,
      :math:`10\log_{10}(\xi \sum_n |w_n|^2 / N)` of the realised weights (calibration,
      dead channels and the radiation efficiency included; mutual coupling ignored, as
      P_rad = xi P_in, common practice);
    - ``eirp_dbw``: :math:`10\log_{10}(P_{el} \sum_n |w_n|^2) + G` with ``element_power_w``
      P_el per channel at full drive and G the gain in dBi (EIRP = P_in G, as
      :func:`steradian.radiation.eirp`); NaN without ``element_power_w``.

    Difference beams (kind ``difference_az``/``difference_el``) are scored as such:
    ``null_depth_db`` is the level at the commanded direction relative to the beam's peak
    (NaN for sum beams); ``psl_db`` (and ``ideal_psl_db``) is the difference sidelobe level,
    the highest refined lobe farther than the evaluator's ``MAIN_LOBES`` (2.2) times the
    peak's offset from the commanded direction, so the two main lobes are excluded; the peak and
    directivity are those of the higher main lobe; ``pointing_error_deg`` (and its ideal) is
    the angle of the null from the commanded direction (the null between the two lobes
    along the difference axis, by :func:`steradian.metrics.difference_null`, the search the
    analysis uses); ``monopulse_slope_per_deg`` is the slope of Delta / Sigma at the null,
    both normalised to directivity, Sigma the uniform-amplitude beam of the enabled elements
    steered to the same direction (as :mod:`steradian.metrics` defines it; NaN for sum
    beams).
    """

    theta_deg: np.ndarray
    phi_deg: np.ndarray
    peak_theta_deg: np.ndarray
    peak_phi_deg: np.ndarray
    directivity_dbi: np.ndarray
    gain_dbi: np.ndarray
    pointing_error_deg: np.ndarray
    psl_db: np.ndarray
    qlobe_db: np.ndarray
    ideal_directivity_dbi: np.ndarray
    ideal_psl_db: np.ndarray
    ideal_pointing_error_deg: np.ndarray
    loss_db: np.ndarray
    rms_phase_error_deg: np.ndarray
    drive_loss_db: np.ndarray | None = None
    radiated_power_db: np.ndarray | None = None
    eirp_dbw: np.ndarray | None = None
    null_depth_db: np.ndarray | None = None
    monopulse_slope_per_deg: np.ndarray | None = None
    realized_gain_dbi: np.ndarray | None = None

    def __post_init__(self):
        for f in ("drive_loss_db", "radiated_power_db", "eirp_dbw", "null_depth_db",
                  "monopulse_slope_per_deg", "realized_gain_dbi"):
            if getattr(self, f) is None:
                object.__setattr__(self, f, np.full(len(self.theta_deg), np.nan))

    def __len__(self) -> int:
        return len(self.theta_deg)

    def rows(self) -> list[dict]:
        """One JSON-friendly dict per beam (``beam`` index first)."""
        cols = {f: np.asarray(getattr(self, f), float) for f in METRIC_FIELDS}
        return [{"beam": i, **{f: jsonable(cols[f][i]) for f in METRIC_FIELDS}}
                for i in range(len(self))]

    def _of_kind(self, values, kind: str) -> np.ndarray:
        """``values`` of the sum beams (``kind="sum"``) or of the difference beams, NaN
        elsewhere; a difference beam is one with a null depth."""
        v = np.asarray(values, float)
        nd = self.null_depth_db
        diff = (np.zeros(v.shape, bool) if nd is None
                else np.isfinite(np.asarray(nd, float)))
        return np.where(diff == (kind != "sum"), v, np.nan)

    def summary(self) -> dict:
        """Worst cases over the table."""
        def mx(a):
            a = np.asarray(a, float)
            return None if np.all(np.isnan(a)) else float(np.nanmax(a))

        def mn(a):
            a = np.asarray(a, float)
            return None if np.all(np.isnan(a)) else float(np.nanmin(a))

        def arg(a):
            a = np.asarray(a, float)
            return None if np.all(np.isnan(a)) else int(np.nanargmax(a))

        return {"beams": len(self),
                "directivity_dbi_min": mn(self.directivity_dbi),
                "directivity_dbi_max": mx(self.directivity_dbi),
                "gain_dbi_min": mn(self.gain_dbi),
                "realized_gain_dbi_min": mn(self.realized_gain_dbi),
                "realized_gain_dbi_min_beam": arg(-np.asarray(self.realized_gain_dbi, float)),
                "loss_db_max": mx(self.loss_db), "loss_db_max_beam": arg(self.loss_db),
                "loss_db_mean": (None if np.all(np.isnan(self.loss_db))
                                 else float(np.nanmean(self.loss_db))),
                # A difference beam's psl_db is its difference sidelobe level: reported
                # apart, so the sum beams' worst sidelobe is not a difference figure.
                "psl_db_max": mx(self._of_kind(self.psl_db, "sum")),
                "psl_db_max_beam": arg(self._of_kind(self.psl_db, "sum")),
                "difference_sll_db_max": mx(self._of_kind(self.psl_db, "difference")),
                "qlobe_db_max": mx(self.qlobe_db), "qlobe_db_max_beam": arg(self.qlobe_db),
                "pointing_error_deg_max": mx(self.pointing_error_deg),
                "pointing_error_deg_max_beam": arg(self.pointing_error_deg),
                "rms_phase_error_deg_max": mx(self.rms_phase_error_deg),
                "drive_loss_db_max": mx(self.drive_loss_db),
                "drive_loss_db_max_beam": arg(self.drive_loss_db),
                "radiated_power_db_min": mn(self.radiated_power_db),
                "radiated_power_db_min_beam": arg(-np.asarray(self.radiated_power_db, float)),
                "eirp_dbw_min": mn(self.eirp_dbw),
                "eirp_dbw_min_beam": arg(-np.asarray(self.eirp_dbw, float)),
                "null_depth_db_max": mx(self.null_depth_db),
                "null_depth_db_max_beam": arg(self.null_depth_db),
                "monopulse_slope_per_deg_min": mn(self.monopulse_slope_per_deg),
                "monopulse_slope_per_deg_min_beam": arg(
                    -np.asarray(self.monopulse_slope_per_deg, float))}
