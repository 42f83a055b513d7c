"""Analysis of one client for one report month: record in, :class:`ClientAnalysis` out.

Glue only: every number comes from a pure function in ``reportgen.science``.  The
stages follow the chain a practitioner would check by hand, each in its own module
with its own frozen output type:

==============  ==================================================================
context         :class:`ClientContext`: the log cut at the month's end, age, special
                handling, phase windows, knots
trend           :class:`TrendStage`: trend weight, noise model, month change, rate
composition     :class:`CompositionStage`: skinfold results, reference fat mass
resting         :class:`RestingStage`: resting equations; :class:`RestingModel`
balance         :class:`PhaseBalance` per phase: stored energy, observed TDEE
baseline        the client's own reference (:class:`~reportgen.science.expected.Baseline`)
expected        :class:`PhaseExpectation` per phase: expected TDEE, adaptation
adaptation      :class:`~reportgen.science.adaptation.PhaseAdaptation` per phase: the
                combined adaptation, the drop in expenditure in parts, implied intake
phases          :class:`~reportgen.results.PhaseResult` per phase; the current phase
expenditure     :class:`ExpenditureStage`: the daily expenditure path
projection      :class:`~reportgen.results.Projection`
quality         :class:`QualityStage`: signals, flags, gaps
stages          :class:`ClientStages`: all of the above, assembled into the result
==============  ==================================================================

A science function that cannot compute raises
:class:`~reportgen.science.errors.NotComputable`; the stages catch only that and record
its reason in the notes.  Anything else propagates to the caller (the batch records
the client as failed).
"""

from __future__ import annotations

from reportgen.analysis.adaptation import adaptation_stage
from reportgen.analysis.balance import balance_stage
from reportgen.analysis.baseline import baseline_stage
from reportgen.analysis.composition import composition_stage
from reportgen.analysis.context import MIN_ANALYSIS_DAYS, client_context
from reportgen.analysis.expected import EARLY_PHASE_DAYS, expected_stage
from reportgen.analysis.expenditure import expenditure_stage
from reportgen.analysis.methods import METHODS
from reportgen.analysis.phases import phase_results
from reportgen.analysis.projection import projection_stage
from reportgen.analysis.quality import quality_stage
from reportgen.analysis.resting import resting_stage
from reportgen.analysis.stages import ClientStages
from reportgen.analysis.trend import trend_stage
from reportgen.config import AnalysisSettings
from reportgen.io.model import ClientRecord
from reportgen.month import ReportMonth
from reportgen.results import ClientAnalysis

__all__ = [
    "EARLY_PHASE_DAYS",
    "METHODS",
    "MIN_ANALYSIS_DAYS",
    "ClientStages",
    "analyse_client",
    "run_stages",
]


def analyse_client(
    record: ClientRecord, month: ReportMonth | str, settings: AnalysisSettings
) -> ClientAnalysis:
    """Analyse one client's record for the report month ``month`` ("YYYY-MM").

    Every field of the result is filled; values the data cannot support are missing with
    a reason.  Raises ValueError if the record has errors, and
    :class:`~reportgen.month.InvalidMonth` (a ValueError) if ``month`` is not a month.
    """
    return run_stages(record, month, settings).analysis()


def run_stages(
    record: ClientRecord, month: ReportMonth | str, settings: AnalysisSettings
) -> ClientStages:
    """Run every stage in order; :meth:`ClientStages.analysis` assembles the result."""
    if not record.ok:
        raise ValueError(
            f"record for {record.client.client_id} has errors; analyse only ok records"
        )
    ctx = client_context(record, ReportMonth(month), settings)
    trend = trend_stage(ctx)
    composition = composition_stage(ctx, trend)
    resting = resting_stage(ctx, trend, composition)
    balances = balance_stage(ctx, trend, composition)
    baseline = baseline_stage(ctx, trend, composition, resting.model, balances)
    expectations = expected_stage(ctx, balances, composition, baseline, resting.model)
    adaptations = adaptation_stage(ctx, composition, balances, expectations, baseline)
    phases = phase_results(ctx, trend, composition, balances, expectations, baseline, adaptations)
    expenditure = expenditure_stage(ctx, trend, composition)
    projection = projection_stage(ctx, trend, composition, expenditure, baseline, resting.model)
    return ClientStages(
        context=ctx,
        trend=trend,
        composition=composition,
        resting=resting,
        balances=balances,
        baseline=baseline,
        expectations=expectations,
        adaptations=adaptations,
        phases=phases,
        expenditure=expenditure,
        projection=projection,
        quality=quality_stage(ctx, trend, composition, phases),
    )
