"""Chart builders of the losses and face views (pure functions, no Streamlit)."""

import pytest

from core.model import shading
from explorer.views import face, losses

ARRAY = {"name": "porch", "face": "east porch", "coupling": "dc", "poa_kwh": 1000.0,
         "losses_kwh": {"horizon": 10.0, "obstacles": 50.0, "row_shading": 0.0, "mismatch": 12.0,
                        "temperature": -5.0, "clipping": 3.0, "conversion": 30.0, "curtailment": 20.0,
                        "other": 100.0},
         "dc_kwh": 833.0, "ac_kwh": 780.0}


def test_loss_steps_run_from_potential_to_delivered():
    frame = losses.loss_steps(ARRAY)
    assert frame["step"].iloc[0].startswith("In the plane") and frame["step"].iloc[-1] == "Delivered"
    inner = frame.iloc[1:-1]
    # Each span is its loss; the running level ends where the delivered bar ends (the chain closes).
    assert (inner["end_kwh"] - inner["start_kwh"]).sum() == pytest.approx(
        sum(abs(v) for v in ARRAY["losses_kwh"].values() if abs(v) >= 0.5))
    assert ARRAY["poa_kwh"] + inner["kwh"].sum() == pytest.approx(ARRAY["ac_kwh"])
    assert set(inner["kind"]) == {"loss", "gain"}  # cold cells give a little back
    spec = losses.loss_chart(frame, "porch").to_dict()
    assert "kWh" in spec["encoding"]["x"]["title"] and "porch" in spec["title"]["text"]


def test_face_drawing_has_one_rectangle_per_module():
    lay = shading.FaceLayout(tilt_deg=20.0, azimuth_deg=180.0, rows=2, columns=3, length_m=1.7, width_m=1.1)
    frame = face.face_modules(lay, [0, 10, 0, 0, 0, 250])
    assert len(frame) == 6 and frame["hours"].max() == 250
    assert frame.loc[5, "row"] == 2 and frame.loc[5, "column"] == 3
    spec = face.face_chart(frame, "south").to_dict()
    assert spec["encoding"]["color"]["legend"]["title"].startswith("Shade")
