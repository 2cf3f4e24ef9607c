"""The scenario file (TOML, schema 1): validated, frozen dataclasses and a loader and saver.

One human-editable file describes a site, its existing system and the expansion being considered; units
are in the key names. ``schema`` holds the dataclasses, ``reader`` the one general validator they drive,
``crosschecks`` the rules between keys, ``toml_io`` reading and writing. The reference of every key is in
``docs/design.md``.
"""

from core.scenario.schema import (  # noqa: F401  (the package's public names)
    AC_CONTROL_MODES,
    MONTHS,
    PATH_KEYS,
    SCHEMA,
    Array,
    Battery,
    Controller,
    Design,
    Expansion,
    Face,
    Grid,
    InverterCharger,
    Load,
    Measured,
    Microinverter,
    Module,
    Obstacle,
    RandomOutages,
    Scenario,
    SimulationSettings,
    Site,
    Tariff,
    Weather,
)
from core.scenario.toml_io import (  # noqa: F401
    load_scenario,
    parse_scenario,
    save_scenario,
    scenario_to_dict,
    scenario_to_toml,
)
