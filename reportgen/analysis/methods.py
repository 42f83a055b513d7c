"""The methods page entries of the analysis's own methods (equations cite their own)."""

from __future__ import annotations

from collections.abc import Iterable

from reportgen.results import MethodUsed

METHODS: dict[str, MethodUsed] = {
    "local-linear-trend": MethodUsed(
        code="local-linear-trend",
        name="Local linear trend model with AR(1) water swings, Kalman filter and RTS smoother, "
        "robust to spikes",
        reference="Durbin J, Koopman SJ. Time Series Analysis by State Space Methods, 2nd ed. "
        "Oxford University Press; 2012.",
        see=None,
    ),
    "hall-2008-energy-density": MethodUsed(
        code="hall-2008-energy-density",
        name="Energy content of weight change: Hall 2008 tissue energy densities (fat 9440 "
        "kcal/kg, lean 1816 kcal/kg) with Forbes' fat/lean partition",
        reference="Hall KD. What is the required energy deficit per unit weight loss? Int J Obes "
        "2008;32:573-576. doi:10.1038/sj.ijo.0803720. Forbes GB. Lean body mass-body fat "
        "interrelationships in humans. Nutr Rev 1987;45:225-231.",
    ),
    "expenditure-state-space": MethodUsed(
        code="expenditure-state-space",
        name="Daily expenditure from a state-space model of weight with intake as input",
        reference="Energy balance W' = W + (intake - expenditure)/rho with expenditure a random "
        "walk; Kalman filter and RTS smoother (Durbin & Koopman 2012).",
    ),
    "hall-2011": MethodUsed(
        code="hall-2011",
        name="Hall et al. 2011 adult weight-dynamics model with adaptive thermogenesis",
        reference="Hall KD, Sacks G, Chandramohan D, et al. Quantification of the effect of "
        "energy imbalance on bodyweight. Lancet 2011;378:826-837. "
        "doi:10.1016/S0140-6736(11)60812-X",
    ),
    "adaptation-combined": MethodUsed(
        code="adaptation-combined",
        name="Metabolic adaptation: own data and the literature expectation weighed by "
        "precision, with a logging-drift component; intake implied by weight; steps at the "
        "ACSM walking cost",
        reference="Hall KD, et al. Lancet 2011;378:826-837 (adaptive thermogenesis). Leibel RL, "
        "Rosenbaum M, Hirsch J. N Engl J Med 1995;332:621-628 (between-person spread). "
        "Hall KD, Chow CC. Am J Clin Nutr 2011;94:66-74 and Sanghvi A, et al. Am J Clin Nutr "
        "2015;102:353-358 (intake from weight). ACSM's Guidelines for Exercise Testing and "
        "Prescription, metabolic equations (walking).",
    ),
}


def merge_methods(*groups: Iterable[MethodUsed]) -> tuple[MethodUsed, ...]:
    """One entry per code, in order of first use; a later entry of a code replaces its text.

    (A skinfold equation used in two sessions keeps its first place on the methods page
    and the wording of its latest session.)
    """
    by_code: dict[str, MethodUsed] = {}
    for group in groups:
        for method in group:
            by_code[method.code] = method
    return tuple(by_code.values())
