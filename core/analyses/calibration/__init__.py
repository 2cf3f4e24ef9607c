"""Calibration against the existing system's monitoring export (``python -m core calibrate``).

Read the export (:mod:`.record`), screen it with pvanalytics (:mod:`.screening`), fit the existing DC-coupled arrays'
losses, the standing draw and the base load (:mod:`.fit`) against the scenario's own chain (:mod:`.model`), judge
the fit before and after by ASHRAE Guideline 14's NMBE and CV(RMSE) (:mod:`.metrics`, :mod:`.goodness`), and give a
calibrated copy of the scenario (:mod:`.calibrated`). :func:`calibrate` does it all.
"""

from core.analyses.calibration.calibrate import Calibration, calibrate
from core.analyses.calibration.calibrated import apply_fit, write_calibrated
from core.analyses.calibration.metrics import GUIDELINE_14, cv_rmse_pct, meets_guideline_14, nmbe_pct

__all__ = ["GUIDELINE_14", "Calibration", "apply_fit", "calibrate", "cv_rmse_pct", "meets_guideline_14",
           "nmbe_pct", "write_calibrated"]
