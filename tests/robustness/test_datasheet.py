"""An impossible module datasheet is refused naming the key; a scalar efficiency out of range is reported as a
number out of range, not as "expected a list". The datasheet rule is checked against the CEC module database that
pvlib ships (sam-library-cec-modules-2019-03-05.csv): real datasheets pass it."""

from __future__ import annotations

import pvlib
import pytest

from core.errors import InputError
from core.scenario import parse_scenario
from core.scenario.crosschecks import DATASHEET_POWER_TOLERANCE
from tests.robustness.common import MAPLE, PVLIB_DATA

TEXT = (MAPLE / "scenario.toml").read_text(encoding="utf-8")


def _module_block() -> tuple[str, dict]:
    """The first module of the sample scenario: its TOML lines and figures."""
    import tomllib

    name, module = next(iter(tomllib.loads(TEXT)["modules"].items()))
    return name, module


def _with(key: str, value: float) -> str:
    name, module = _module_block()
    old = f"{key} = {module[key]!r}".replace("'", '"')
    assert old in TEXT, old
    return TEXT.replace(old, f"{key} = {value}", 1)


def test_vmp_above_voc_is_refused():
    name, module = _module_block()
    with pytest.raises(InputError, match=rf"modules\.{name}\.vmp_v.*not below Voc"):
        parse_scenario(_with("vmp_v", module["voc_v"] + 5), base_dir=MAPLE)


def test_pmax_far_above_vmp_times_imp_is_refused():
    name, module = _module_block()
    with pytest.raises(InputError, match=rf"modules\.{name}\.pmax_w.*Vmp x Imp"):
        parse_scenario(_with("pmax_w", round(module["vmp_v"] * module["imp_a"] * 1.5)), base_dir=MAPLE)


def test_a_scalar_efficiency_out_of_range_says_so():
    text = TEXT.replace("[inverter_charger]", "[inverter_charger]\nefficiency = 2.0", 1)
    if text == TEXT:
        pytest.skip("the sample has no [inverter_charger] section")
    text = text.replace("efficiency = 2.0\n", "efficiency = 2.0\n", 1)
    lines, seen = [], False
    for line in text.splitlines():  # keep only the first efficiency key of the section
        if line.startswith("efficiency =") and seen:
            continue
        seen = seen or line.startswith("efficiency =")
        lines.append(line)
    with pytest.raises(InputError) as err:
        parse_scenario("\n".join(lines), base_dir=MAPLE)
    assert "efficiency" in str(err.value) and "expected a list" not in str(err.value)
    assert "outside" in str(err.value) or "above" in str(err.value) or "1" in str(err.value)


def test_real_datasheets_pass_the_rule():
    # The CEC database's STC figures: Vmp < Voc, Imp < Isc and Pmax = Vmp x Imp within the tolerance.
    cec = pvlib.pvsystem.retrieve_sam(path=str(PVLIB_DATA / "sam-library-cec-modules-2019-03-05.csv")).T
    product = cec["V_mp_ref"].astype(float) * cec["I_mp_ref"].astype(float)
    ok = ((cec["V_mp_ref"].astype(float) < cec["V_oc_ref"].astype(float))
          & (cec["I_mp_ref"].astype(float) < cec["I_sc_ref"].astype(float))
          & ((cec["STC"].astype(float) / product - 1.0).abs() <= DATASHEET_POWER_TOLERANCE))
    assert len(cec) > 10_000 and ok.mean() > 0.999
