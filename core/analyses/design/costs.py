"""What a design costs: modules, bought converters, fixed and per-module costs, re-wiring and export control.

Prices are per unit in the tariff's currency (``price`` on modules, controllers and microinverters); a price not
given counts as 0. A controller that an existing array already uses is not bought again. An export-control mode
that needs equipment — ``"limiter"`` (meter and current sensors) or ``"relay"`` (a relay and its SOC signal) —
costs ``cost_limiter``, unless the system already runs that mode; ``"islanded"`` is a way of running the
inverter-charger and buys nothing (common practice).
"""

from __future__ import annotations

from dataclasses import dataclass

from core.analyses.design.candidates import Candidate
from core.analyses.design.spec import DesignSpec
from core.scenario import Scenario

#: AC export-control modes that need equipment bought for them (priced as ``cost_limiter``).
EQUIPPED_MODES = ("limiter", "relay")


@dataclass(frozen=True)
class Cost:
    """A design's cost items (currency) and their sum."""

    items: dict[str, float]

    @property
    def total(self) -> float:
        return float(sum(self.items.values()))

    def to_dict(self) -> dict:
        return {"items": dict(self.items), "total": self.total}


def _price(value: float | None) -> float:
    return 0.0 if value is None else float(value)


def design_cost(sc: Scenario, spec: DesignSpec, candidate: Candidate) -> Cost:
    """The cost of a design, item by item (items that do not apply are left out)."""
    used = {a.controller for a in sc.arrays if a.coupling == "dc" and a.module_count > 0}
    items: dict[str, float] = {}

    def add(key: str, amount: float) -> None:
        if amount:
            items[key] = items.get(key, 0.0) + float(amount)

    # From [expansion], the module's and converters' prices are inside its costs per panel.
    module_price = 0.0 if spec.from_expansion else _price(sc.modules[spec.module].price)
    for p in candidate.parts:
        add("modules", module_price * p.modules)
        if p.coupling == "dc":
            add("mounting and wiring, DC", spec.cost_per_module_dc * p.modules)
            if p.controller not in used and not spec.from_expansion:
                add(f"controller {p.controller}", _price(sc.controllers[p.controller].price))
            if p.restrung:
                add("re-stringing", spec.cost_restring)
        else:
            add("mounting and wiring, AC", spec.cost_per_module_ac * p.modules)
            if not spec.from_expansion:
                add(f"microinverters {p.microinverter}", _price(sc.microinverters[p.microinverter].price) * p.units)
            if p.export_control in EQUIPPED_MODES and p.export_control != sc.grid.ac_control_mode:
                add(f"export control ({p.export_control})", spec.cost_limiter)
    if any(p.coupling == "dc" for p in candidate.parts):
        add("fixed, DC part", spec.cost_fixed_dc)
    if any(p.coupling == "ac" for p in candidate.parts):
        add("fixed, AC part", spec.cost_fixed_ac)
    return Cost(items=items)
