"""One meaning, one colour: the palette of every chart of the explorer and the HTML report."""

# The Okabe–Ito palette, distinguishable under the common colour-vision deficiencies (Okabe & Ito, "Color
# Universal Design", 2008; openly published). One meaning, one colour, in the explorer and the HTML report.
BLACK = "#000000"
ORANGE = "#E69F00"
SKY_BLUE = "#56B4E9"
BLUISH_GREEN = "#009E73"
YELLOW = "#F0E442"
BLUE = "#0072B2"
VERMILLION = "#D55E00"
REDDISH_PURPLE = "#CC79A7"
GREY = "#8C8C8C"

#: Where the PV energy goes.
DESTINATION_COLOURS = {
    "Used directly by the loads": BLUISH_GREEN,
    "Into the battery": SKY_BLUE,
    "Curtailed": ORANGE,
    "Clipped": REDDISH_PURPLE,
    "Exported": VERMILLION,
}

#: Powers over a day.
SERIES_COLOURS = {
    "Backed-up loads": BLACK,
    "All loads": REDDISH_PURPLE,
    "Daytime base load": GREY,
    "AC-coupled PV output": ORANGE,
    "DC-coupled PV output": BLUE,
    "What the panels could make": SKY_BLUE,
    "Curtailed or clipped": VERMILLION,
    "Battery SOC": BLUISH_GREEN,
}

#: The expansion options, keyed by option (``core.analyses.options.OPTIONS``), never by their label: one mapping
#: for every chart that tells the options apart.
OPTION_COLOURS = {
    "baseline": GREY,
    "ac_backed_up": ORANGE,
    "ac_grid": VERMILLION,
    "dc": BLUE,
}

#: Check outcomes.
STATUS_COLOURS = {"pass": BLUISH_GREEN, "warn": ORANGE, "fail": VERMILLION}

#: Diverging map for "below / above the base load" (blue = under, orange = surplus), colour-blind safe.
DIVERGING_SCHEME = "blueorange"
#: Sequential map for amounts (viridis: perceptually uniform and colour-blind safe).
SEQUENTIAL_SCHEME = "viridis"
