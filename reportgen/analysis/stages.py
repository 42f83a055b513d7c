"""Every stage's output for one client, and the :class:`ClientAnalysis` they make together."""

from __future__ import annotations

from dataclasses import dataclass

from reportgen.analysis.balance import PhaseBalance
from reportgen.analysis.composition import CompositionStage
from reportgen.analysis.context import ClientContext
from reportgen.analysis.expected import PhaseExpectation
from reportgen.analysis.expenditure import ExpenditureStage
from reportgen.analysis.methods import METHODS, merge_methods
from reportgen.analysis.phases import current_phase
from reportgen.analysis.quality import QualityStage
from reportgen.analysis.resting import RestingStage
from reportgen.analysis.trend import TrendStage
from reportgen.results import ClientAnalysis, MethodUsed, PhaseResult, Projection
from reportgen.science.adaptation import PhaseAdaptation
from reportgen.science.expected import Baseline


@dataclass(frozen=True)
class ClientStages:
    """The intermediate results of one client's analysis, stage by stage (in order)."""

    context: ClientContext
    trend: TrendStage
    composition: CompositionStage
    resting: RestingStage
    balances: tuple[PhaseBalance, ...]
    baseline: Baseline | None
    expectations: tuple[PhaseExpectation | None, ...]  # None under special handling
    adaptations: tuple[PhaseAdaptation | None, ...]  # None where not assessed
    phases: tuple[PhaseResult, ...]
    expenditure: ExpenditureStage
    projection: Projection | None
    quality: QualityStage

    def methods(self) -> tuple[MethodUsed, ...]:
        """Methods-page entries in order of first use."""
        energy_analysis = self.trend.fit is not None and not self.context.special_handling
        return merge_methods(
            self.trend.methods,
            self.composition.methods,
            self.resting.methods,
            (METHODS["hall-2008-energy-density"],) if energy_analysis else (),
            self.expenditure.methods,
            (METHODS["hall-2011"],) if self.projection is not None else (),
            (METHODS["adaptation-combined"],) if any(self.adaptations) else (),
        )

    def notes(self) -> tuple[str, ...]:
        """The client-level notes of every stage, each once, in stage order."""
        every = self.trend.notes + self.composition.notes + self.resting.notes
        return tuple(dict.fromkeys(every + self.expenditure.notes))

    def analysis(self) -> ClientAnalysis:
        """The result the reports, summary and overview read."""
        ctx, trend = self.context, self.trend
        current, week_of_phase = current_phase(ctx, self.phases)
        return ClientAnalysis(
            client=ctx.record.client,
            month=ctx.month,
            as_of=ctx.as_of,
            age_years=ctx.age_years,
            minor=ctx.minor,
            special_handling=ctx.special_handling,
            log=ctx.log,
            trend=trend.trend,
            current_weight_kg=trend.current_weight,
            month_change_kg=trend.month_change,
            weekly_rate_kg=trend.weekly_rate,
            weekly_rate_pct=trend.weekly_rate_pct,
            month_mean_intake_kcal=self.quality.month_mean_intake_kcal,
            bmi=self.quality.bmi_kg_m2,
            bodycomp=self.composition.sessions,
            bodyfat_fallback=self.composition.fallback,
            resting_kcal=dict(self.resting.equations_kcal),
            phases=self.phases,
            current_phase=current,
            week_of_phase=week_of_phase,
            expenditure=self.expenditure.series,
            signals=self.quality.signals,
            projection=self.projection,
            flags=self.quality.flags,
            methods=self.methods(),
            quality=self.quality.quality,
            notes=self.notes(),
        )
