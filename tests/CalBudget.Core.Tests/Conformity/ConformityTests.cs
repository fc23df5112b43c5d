using CalBudget.Core.Aging;
using CalBudget.Core.Conformity;
using CalBudget.Core.Gum;
using CalBudget.Core.MonteCarlo;

namespace CalBudget.Core.Tests.Conformity;

public class ConformityTests
{
    private static readonly ToleranceLimits Spec = ToleranceLimits.Symmetric(5e-9);

    [Fact]
    public void OneUpperLimitTwoStandardUncertaintiesAwayGivesPhiOfTwo()
    {
        // ../shared/CHECKS.md (JCGM 106:2012 eq. for p_c, seen as formula): one upper limit, y = T_U - 2u: p_c = Phi(2) = 0.97725 (computed).
        var upper = ToleranceLimits.Create(null, 1e-9);
        double u = 1e-10;
        Check.Relative(0.977249868051821, ConformityAssessment.ProbabilityOfConformity(1e-9 - 2 * u, u, upper), 1e-12, "p_c");
    }

    [Fact]
    public void TwoSidedLimitsAtTwoStandardUncertaintiesGiveTheNormalCoverage()
    {
        // Phi(2) - Phi(-2) = 0.954499736103642 (the normal coverage for k = 2; JCGM 100 Table G.1 gives 95.45 %).
        Check.Relative(0.954499736103642, ConformityAssessment.ProbabilityOfConformity(0, 1e-10, ToleranceLimits.Symmetric(2e-10)), 1e-12, "p_c");
    }

    [Fact]
    public void AResultExactlyAtALimitPassesSimpleAcceptanceWithHalfItsProbability()
    {
        // ../shared/CHECKS.md (ILAC-G8 4.2.1): at a limit, p_c = 0.5 under simple acceptance.
        var d = ConformityAssessment.Decide(5e-9, 1e-10, 2e-10, Spec, DecisionRule.SimpleAcceptance);
        Assert.Equal(ConformityOutcome.Pass, d.Outcome);
        Check.Relative(0.5, d.ProbabilityOfConformity, 1e-12, "p_c");
        Assert.Equal(0, d.GuardBand);
    }

    [Fact]
    public void AGuardBandOfUKeepsTheFalseAcceptRiskUnderTwoAndAHalfPercent()
    {
        // ../shared/CHECKS.md (ILAC-G8 4.2.2): with w = U (k = 2) the worst accepted value is T_U - U, whose risk is
        // 1 - Phi(2) = 2.275 % < 2.5 %.
        double u = 1e-10, bigU = 2e-10;
        var atAcceptanceLimit = ConformityAssessment.Decide(5e-9 - bigU, u, bigU, Spec, DecisionRule.GuardBand(1));
        Assert.Equal(ConformityOutcome.Pass, atAcceptanceLimit.Outcome);
        Check.Relative(5e-9 - bigU, atAcceptanceLimit.AcceptanceUpper!.Value, 1e-15, "acceptance limit");
        Assert.True(1 - atAcceptanceLimit.ProbabilityOfConformity < 0.025);
        Check.Relative(0.0227501319481792, 1 - atAcceptanceLimit.ProbabilityOfConformity, 1e-9, "false-accept risk");
        Assert.Equal(ConformityOutcome.Fail, ConformityAssessment.Decide(5e-9 - bigU + 1e-12, u, bigU, Spec, DecisionRule.GuardBand(1)).Outcome);
        Assert.Equal(ConformityOutcome.Fail, ConformityAssessment.Decide(5e-9 - 2.5e-10, u, bigU, Spec, DecisionRule.GuardBand(1.5)).Outcome);
    }

    [Theory]
    // ILAC-G8:09/2019 4.2.3 with w = U = 2e-10 against +/-5e-9 (limits inclusive, as documented on ConformityAssessment.Decide)
    [InlineData(0.0, ConformityOutcome.Pass)]
    [InlineData(4.8e-9, ConformityOutcome.Pass)]              // T_U - U: the interval touches the limit from inside
    [InlineData(4.8000001e-9, ConformityOutcome.ConditionalPass)]
    [InlineData(5e-9, ConformityOutcome.ConditionalPass)]     // at the limit
    [InlineData(5.0000001e-9, ConformityOutcome.ConditionalFail)]
    [InlineData(5.2e-9, ConformityOutcome.ConditionalFail)]   // T_U + U: the interval touches the limit from outside
    [InlineData(5.2000001e-9, ConformityOutcome.Fail)]
    [InlineData(-4.8e-9, ConformityOutcome.Pass)]
    [InlineData(-5e-9, ConformityOutcome.ConditionalPass)]
    [InlineData(-5.2e-9, ConformityOutcome.ConditionalFail)]
    [InlineData(-6e-9, ConformityOutcome.Fail)]
    public void TheFourOutcomesMeetAtTheirBoundaries(double y, ConformityOutcome expected) =>
        Assert.Equal(expected, ConformityAssessment.Decide(y, 1e-10, 2e-10, Spec, DecisionRule.NonBinary).Outcome);

    [Fact]
    public void TheTestUncertaintyRatioIsTheSpanOverTwiceU()
    {
        // Cal-lab practice: TUR = (T_U - T_L) / (2U); +/-5e-9 with U = 1.25e-9 is the usual 4:1.
        Check.Relative(4.0, ConformityAssessment.Decide(0, 6.25e-10, 1.25e-9, Spec, DecisionRule.SimpleAcceptance).TestUncertaintyRatio!.Value, 1e-12, "TUR");
        Assert.Null(ConformityAssessment.Decide(0, 1e-10, 2e-10, ToleranceLimits.Create(null, 1e-9), DecisionRule.SimpleAcceptance).TestUncertaintyRatio);
    }

    [Theory]
    [InlineData(1e-9, -1e-9, "tolerance.lower")]
    [InlineData(1e-9, 1e-9, "tolerance.lower")]
    [InlineData(double.NaN, 1e-9, "tolerance.lower")]
    [InlineData(-1e-9, double.PositiveInfinity, "tolerance.upper")]
    public void ReversedOrNonFiniteLimitsAreRefused(double lower, double upper, string field) =>
        Assert.Equal(field, Assert.Throws<MetrologyException>(() => ToleranceLimits.Create(lower, upper)).Parameter);

    [Fact]
    public void NoLimitAtAllIsRefused() =>
        Assert.Equal("tolerance", Assert.Throws<MetrologyException>(() => ToleranceLimits.Create(null, null)).Parameter);

    [Fact]
    public void TheMonteCarloFractionWithinTheLimitsAgreesWithTheNormalProbability()
    {
        // A single normal input: the Monte Carlo fraction below T_U = 2u estimates Phi(2) = 0.97725; the tolerance is four
        // standard errors of a proportion at M = 1e6 (sqrt(p (1 - p) / M) = 1.5e-4).
        var budget = UncertaintyBudget.Create([Contribution.Create("y", InputDistribution.NormalFromStandard(1e-10))]);
        var mc = MonteCarloEngine.Run(budget, new MonteCarloOptions { Trials = 1_000_000, Seed = 11, CountWithin = (null, 2e-10) });
        Check.Absolute(0.977249868051821, mc.FractionWithin!.Value, 6e-4, "fraction within");
        Assert.Null(MonteCarloEngine.Run(budget, new MonteCarloOptions { Trials = 10_000, Seed = 11 }).FractionWithin);
    }

    [Fact]
    public void TheRecallIntervalEndsWhereTheDriftAndUReachTheLimit()
    {
        // An exact drift of 1e-11 per day (no residual, so the fit's covariance is zero): y(t) = 1e-11 t from y_cal = 0 with
        // u_cal = 1e-10, k = 2, so y + U = 1e-11 t + 2e-10 reaches 1.005e-9 at t = 80.5 days: the first whole day is 81.
        var fit = AgingFit.Fit([new AgingPoint(0, -3e-9), new AgingPoint(100, -2e-9), new AgingPoint(200, -1e-9), new AgingPoint(300, 0)], AgingModel.Linear);
        var recall = RecallInterval.Find(fit, 300, 0, 1e-10, 2, ToleranceLimits.Symmetric(1.005e-9), 730);
        Assert.Equal(81, recall.Days);
        Check.Relative(8.1e-10, recall.PredictedOffsetAtRecall, 1e-6, "offset at recall");
        Assert.Contains("linear", recall.Method, StringComparison.Ordinal);
        var capped = RecallInterval.Find(fit, 300, 0, 1e-10, 2, ToleranceLimits.Symmetric(1.005e-9), 60);
        Assert.Null(capped.Days);
        Assert.Equal(0, RecallInterval.Find(fit, 300, 9.5e-10, 1e-10, 2, ToleranceLimits.Symmetric(1.005e-9), 60).Days);
    }

    [Fact]
    public void TheRecallUncertaintyGrowsWithTheSlopesUncertainty()
    {
        // Scattered history: u(t)^2 = u_cal^2 + t^2 u_b^2 for the linear model, so the interval is shorter than the exact
        // drift alone would give (the slope and its u from the fit's covariance).
        var points = new[] { new AgingPoint(0, -3.1e-9), new AgingPoint(100, -1.9e-9), new AgingPoint(200, -1.05e-9), new AgingPoint(300, 0.02e-9) };
        var fit = AgingFit.Fit(points, AgingModel.Linear);
        double b = fit.Parameters[1], ub = Math.Sqrt(fit.Covariance[1, 1]);
        var recall = RecallInterval.Find(fit, 300, 0, 1e-10, 2, ToleranceLimits.Symmetric(1e-9), 3650);
        int d = recall.Days!.Value;
        double Reach(int t) => b * t + 2 * Math.Sqrt(1e-20 + t * t * ub * ub);
        Assert.True(Reach(d) >= 1e-9 && Reach(d - 1) < 1e-9, $"day {d}");
        Assert.True(d < (int)Math.Ceiling((1e-9 - 2e-10) / b));
    }
}

public class StudentConformityTests
{
    [Fact]
    public void ATResultAtItsOwnCoverageLimitHasTheTablesProbability()
    {
        // JCGM 100 Table G.2: t_95(10) = 2.23 (2.228139 to more digits, the two-sided 95 % point): with one upper limit at
        // y + 2.228139 u, p_c = 0.975 for a t-distribution with 10 degrees of freedom
        var limits = ToleranceLimits.Create(null, 2.228139e-9);
        Check.Relative(0.975, ConformityAssessment.ProbabilityOfConformity(0, 1e-9, 10, limits), 1e-6, "p_c, t with nu = 10");
        // the normal form gives more: Phi(2.228139) = 0.98707 (computed), so a finite nu lowers p_c
        Assert.True(ConformityAssessment.ProbabilityOfConformity(0, 1e-9, limits) > 0.987);
        // Decide uses the t when given nu, the normal otherwise
        var d = ConformityAssessment.Decide(0, 1e-9, 2.3e-9, limits, DecisionRule.SimpleAcceptance, 10);
        Check.Relative(0.975, d.ProbabilityOfConformity, 1e-6, "Decide with nu");
    }
}

public class SpecifiedAgingRecallTests
{
    [Fact]
    public void TooFewResultsForAFitFallBackToTheSpecifiedRateAsAGrowingBound()
    {
        // by hand: y = 0, u = 1e-9, k = 2, limits +/-2e-8, rate 1e-10 per day: 2 sqrt(1e-18 + (1e-10 t)^2 / 3) >= 2e-8 when
        // t^2 >= 3 (1e-16 - 1e-18) / 1e-20 = 29700, t >= 172.34: the first whole day is 173
        var r = RecallInterval.FromSpecification(0, 1e-9, 2, ToleranceLimits.Create(-2e-8, 2e-8), 730, 1e-10);
        Assert.Equal(173, r.Days);
        Assert.StartsWith("Predictive from the specification", r.Method, StringComparison.Ordinal);
        Assert.Null(RecallInterval.FromSpecification(0, 1e-9, 2, ToleranceLimits.Create(-2e-8, 2e-8), 100, 1e-10).Days);
    }
}
