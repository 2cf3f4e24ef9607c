"""Each design check's rule in a few plain words, for summaries that name the rules a setting breaks.

A check's own sentence says what was found; these short names say which rule it is, so a summary line reads
"set aside: string too short for hot weather in 78" rather than a check's id.
"""

from __future__ import annotations

#: Check id → the rule in words (lower case, short enough for a sentence or a table cell).
RULE_WORDS = {
    "ac_coupling.uncontrolled_export": "uncontrolled export into a grid that may not be fed",
    "ac_coupling.ratio": "microinverters above the inverter-charger's rating",
    "ac_coupling.absorption": "AC-coupled surplus the charger cannot absorb",
    "clipping.controller": "charge controller clips the array",
    "frequency_watt.curtailment": "microinverters cannot be held back by frequency",
    "micro.voc_cold": "module voltage above the microinverter's limit in the cold",
    "micro.vmp_window": "module voltage outside the microinverter's tracking range",
    "micro.current": "module current above the microinverter's input limit",
    "micro.clipping": "microinverter clips the module",
    "micro.grid_code": "microinverter grid code",
    "spacing.rows": "rows too close together",
    "strings.voc_cold": "string voltage above the controller's limit in the cold",
    "strings.voc_cold_table": "string voltage by the cold-temperature table",
    "strings.vmp_hot": "string too short for the controller in hot weather",
    "strings.vmp_cold": "string voltage above the tracking range in the cold",
    "strings.current": "strings' current above the controller's input limit",
    "strings.mixed": "unlike strings on one controller input",
}


def rule_words(check_id: str) -> str:
    """The rule of ``check_id`` in words; an id without words (a check added later) is shown as it is."""
    return RULE_WORDS.get(check_id, check_id)
