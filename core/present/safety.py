"""The usual cautions (docs/design.md §6): one wording for the page, the report and the README."""

#: The cautions of docs/design.md §6, shown on the page and in the report.
SAFETY_CAUTIONS = (
    "DC strings carry dangerous voltages, even in weak light, and can sustain arcs; check string voltages against "
    "the coldest expected temperature and follow the equipment's instructions.",
    "AC work and any grid-parallel generation — including AC-coupled microinverters on a zero-export system — must "
    "be done and signed off by a licensed electrician under local codes; many grid operators must be notified even "
    "of zero-export systems.",
    "Microinverters must be certified for the local grid code.",
    "Battery installation follows its maker's instructions and local fire rules.",
    "Ballast and roof loads need a structural check.",
    "Results are estimates, not a design approval.",
)
