"""Words shown on the page: section titles, guidance and cautions (one place, our own names)."""

SECTION_ROUTE = "1 · Route"
SECTION_RIDER = "2 · Athlete and equipment"
SECTION_WEATHER = "3 · Weather on the day"
SECTION_APPROACH = "4 · Pacing approach"
SECTION_OUTCOME = "5 · Predicted race"
SECTION_TAKEAWAY = "6 · Take it with you"
SECTION_SETUPS = "7 · Setups side by side"
SECTION_LIBRARY = "8 · Coach's library"
SECTION_ROAD_TEST = "9 · Measure drag area on the road"
SECTION_REVIEW = "10 · Review a race"
SECTION_TEAM = "11 · Team time trial or team pursuit"
"""Titles of the page's sections, in order."""

SPEED_CAUTION = (
    "Predicted speeds, above all on descents, are model estimates, not safe limits. "
    "Ride within your skills, the road and its traffic, traffic law and the race rules."
)
"""Shown beside predicted cycling speeds."""
RUNNING_SPEED_CAUTION = (
    "Predicted paces, above all on descents, are model estimates, not safe limits. "
    "Run within your fitness, the footing, the road and its traffic, traffic law and the "
    "race rules."
)
"""Shown beside predicted running speeds and paces."""


def speed_caution(sport: str) -> str:
    """The speed caution worded for the sport: "Ride within …" for cycling, "Run within …"
    for running."""
    return RUNNING_SPEED_CAUTION if sport == "running" else SPEED_CAUTION


EXERTION_CAUTION = (
    "Hard efforts strain the heart and body: consult a physician before racing or training "
    "hard. Local rules and licensed medical and coaching practice come first."
)
"""Shown in the sidebar and under the predicted race."""

HOT_AIR_TEMPERATURE = 25.0
"""Air temperature from which the page adds its heat caution [°C] (air temperature alone; the
race-day conditions' heat model judges humidity, sun and wind as well)."""
HEAT_CAUTION = (
    "Hot day: drink and cool down before, during and after, and expect to hold less than on a "
    "cool day. The organiser's heat policy and the medical staff come first; stop at signs "
    "of heat illness."
)
"""Shown beside the predicted race when the air is at least HOT_AIR_TEMPERATURE."""


DRAG_AREA_GUIDE = (
    "Typical CdA (m²) by riding position, wind-tunnel studies:\n\n"
    "| position | Defraeye et al. 2010 | Grappe et al. 1997 |\n"
    "|---|---|---|\n"
    "| upright, hands on the tops | ≈ 0.270 | ≈ 0.30 |\n"
    "| hands in the drops | ≈ 0.243 | ≈ 0.28 |\n"
    "| time-trial, on aero bars | ≈ 0.216 | ≈ 0.26 |\n\n"
    "Static mannequin or rider; pedalling raises CdA by roughly 30 % in the tunnel "
    "(García-López et al. 2008).\n\n"
    "Sources: Defraeye T, Blocken B, Koninckx E, Hespel P, Carmeliet J (2010) Aerodynamic "
    "study of different cyclist positions: CFD analysis and full-scale wind-tunnel tests. "
    "J Biomech 43(7):1262-1268, doi:10.1016/j.jbiomech.2010.01.025 · Grappe F, Candau R, "
    "Belli A, Rouillon JD (1997) Aerodynamic drag in field cycling with special reference to "
    "the Obree's position. Ergonomics 40(12):1299-1311 · García-López J, Rodríguez-Marroyo "
    "JA, Juneau CE, Peleteiro J, Martínez AC, Villa JG (2008) Reference values and "
    "improvement of aerodynamic drag in professional cyclists. J Sports Sci 26(3):277-286. "
    "The CdA values in the table are quoted from memory of these papers."
)
"""Help beside the CdA inputs [m²]."""
ROLLING_GUIDE = (
    "Typical Crr by surface (common practice, from memory): race tyre on smooth asphalt "
    "0.0025-0.004 · ordinary asphalt 0.004-0.006 · rough chip-seal 0.006-0.010 · hard gravel "
    "0.008-0.015 · loose gravel or grass 0.02-0.05."
)
"""Help beside the Crr inputs [-]."""

DRAG_AREA_PRESETS = {
    "upright (≈ 0.30)": 0.30,
    "hands in the drops (≈ 0.27)": 0.27,
    "aero bars (≈ 0.24)": 0.24,
    "my own value": None,
}
"""Starting points for CdA, between the two studies above (rounded)."""

ROLLING_PRESETS = {
    "smooth asphalt, race tyres (0.0032)": 0.0032,
    "ordinary asphalt (0.005)": 0.005,
    "rough chip-seal (0.008)": 0.008,
    "hard gravel (0.012)": 0.012,
    "my own value": None,
}
"""Starting points for Crr from the ranges above (0.0032 is Martin et al. 1998's value)."""

APPROACHES = {
    "Even power": "constant",
    "Quickest within my limits": "fastest",
    "Reach a finish time": "target-time",
}
"""Cycling plan choices (label → key of pacing.plan.strategies.STRATEGIES["cycling"])."""

RUNNING_APPROACHES = {
    "Equal effort on every grade": "equal-effort",
    "Even pace (for comparison)": "even-pace",
    "Quickest within my limits": "fastest",
}
"""Running plan choices (label → key of pacing.plan.strategies.STRATEGIES["running"])."""

ROAD_TEST_CDA_NOTE = (
    "The CdA shown is the rider and bike without the rotating-wheel term (F_w = {wheel:g} m²) "
    "and the wheel-bearing friction of Martin et al. (1998): the model takes those off "
    "before the fit and adds them back on its own when it predicts a race. A wind-tunnel CdA "
    "that includes the spinning wheels therefore reads a little higher than this one."
)
"""Road-test caption; {wheel} is pacing.physics.cycling.MARTIN_1998["wheel_drag_area"] [m²]."""

EASING_WORDS = {"braking": "brakes for a bend or a speed limit", "coasting": "coasts",
                "start": "gets going from a standing start"}
"""What the rider does where the ridden power falls below the plan (the kinds of
pacing.plan.energy.EasingEvent), on the power chart and in its table."""
