using CalBudget.Core.Gum;
using CalBudget.Core.MonteCarlo;

namespace CalBudget.Core.Tests.MonteCarlo;

public class MonteCarloEngineTests
{
    private const long Million = 1_000_000;

    private static Contribution Normal(string name, double u) => Contribution.Create(name, InputDistribution.NormalFromStandard(u));

    private static Contribution Rect(string name, double sd) => Contribution.Create(name, InputDistribution.Rectangular(sd * Math.Sqrt(3)));

    private static (GumResult Gum, MonteCarloResult Mc) Run(UncertaintyBudget budget, long? trials = Million, ulong seed = 20261201)
    {
        var gum = budget.Evaluate();
        return (gum, MonteCarloEngine.Run(budget, new MonteCarloOptions { Trials = trials, Seed = seed }, gum));
    }

    // JCGM 101:2008 9.2.2: Y = X1 + X2 + X3 + X4, each N(0, 1): u(y) = 2, 95 % interval [-3.92, 3.92] for GUM and
    // Monte Carlo alike (memory, confirmed by the exact value 2 x 1.95996 = 3.9199). At M = 1e6 the 97.5 % quantile has
    // a standard error of about 0.005; the check allows 0.02.
    [Fact]
    public void FourNormalInputsAgreeWithTheGumAsInJcgm101Example922()
    {
        var (gum, mc) = Run(UncertaintyBudget.Create([Normal("x1", 1), Normal("x2", 1), Normal("x3", 1), Normal("x4", 1)], coverageProbability: 0.95));
        Check.Absolute(3.92, gum.ExpandedUncertainty, 0.005, "GUM U95");
        Check.Absolute(2.0, mc.StandardUncertainty, 0.005, "MC u(y)");
        Check.Absolute(0.0, mc.Estimate, 0.01, "MC y");
        Check.Absolute(-3.9199, mc.CoverageInterval.Low, 0.02, "MC low");
        Check.Absolute(3.9199, mc.CoverageInterval.High, 0.02, "MC high");
        Check.Absolute(7.8398, mc.ShortestCoverageInterval.Length, 0.03, "shortest length");
        Assert.True(mc.Validation!.Validated);
        Assert.Equal(Million, mc.Trials);
    }

    // JCGM 101 9.2.3: four rectangular inputs of standard deviation 1: GUM [-3.92, 3.92], Monte Carlo [-3.88, 3.88]
    // (exact +/-3.8794 for the sum of four uniforms; memory, confirmed by exact computation).
    [Fact]
    public void FourRectangularInputsGiveTheNarrowerIntervalOfJcgm101Example923()
    {
        var (gum, mc) = Run(UncertaintyBudget.Create([Rect("x1", 1), Rect("x2", 1), Rect("x3", 1), Rect("x4", 1)], coverageProbability: 0.95));
        Check.Absolute(3.92, gum.ExpandedUncertainty, 0.005, "GUM U95");
        Check.Absolute(2.0, mc.StandardUncertainty, 0.005, "MC u(y)");
        Check.Absolute(-3.8794, mc.CoverageInterval.Low, 0.02, "MC low");
        Check.Absolute(3.8794, mc.CoverageInterval.High, 0.02, "MC high");
    }

    // JCGM 101 9.2.4: X1..X3 N(0, 1) and X4 rectangular with standard deviation 10: u(y) = 10.15, GUM [-19.9, 19.9],
    // Monte Carlo [-17.0, 17.0] (exact +/-16.995), so the GUM result is not validated (delta = 0.5, d = 2.9).
    [Fact]
    public void DominantRectangularInputFailsValidationAsInJcgm101Example924()
    {
        var (gum, mc) = Run(UncertaintyBudget.Create([Normal("x1", 1), Normal("x2", 1), Normal("x3", 1), Rect("x4", 10)], coverageProbability: 0.95));
        Check.Absolute(10.15, gum.CombinedStandardUncertainty, 0.005, "u_c");
        Check.Absolute(19.9, gum.ExpandedUncertainty, 0.05, "GUM U95");
        Check.Absolute(10.15, mc.StandardUncertainty, 0.03, "MC u(y)");
        Check.Absolute(-16.995, mc.CoverageInterval.Low, 0.06, "MC low");
        Check.Absolute(16.995, mc.CoverageInterval.High, 0.06, "MC high");
        Assert.Equal(0.5, mc.Validation!.NumericalTolerance);
        Assert.False(mc.Validation.Validated);
        Assert.True(mc.Validation.HighDifference > 2.5);
    }

    [Fact]
    public void SameSeedGivesTheSameResultOnAnyNumberOfThreads()
    {
        var budget = MixedBudget();
        var one = MonteCarloEngine.Run(budget, new MonteCarloOptions { Trials = 200_000, Seed = 42, MaxDegreeOfParallelism = 1 });
        var two = MonteCarloEngine.Run(budget, new MonteCarloOptions { Trials = 200_000, Seed = 42, MaxDegreeOfParallelism = 2 });
        var other = MonteCarloEngine.Run(budget, new MonteCarloOptions { Trials = 200_000, Seed = 43 });
        Assert.Equal(one, two);
        Assert.NotEqual(one.CoverageInterval, other.CoverageInterval);
    }

    [Fact]
    public void AdaptiveProcedureStabilisesWithinTheNumericalTolerance()
    {
        // JCGM 101 7.9: p = 0.95 gives sequences of M = max(100/0.05, 1e4) = 1e4 trials.
        var budget = UncertaintyBudget.Create([Normal("x1", 1), Normal("x2", 1), Normal("x3", 1), Normal("x4", 1)], coverageProbability: 0.95);
        var mc = MonteCarloEngine.Run(budget, new MonteCarloOptions { Seed = 5 }, budget.Evaluate());
        Assert.True(mc.Adaptive);
        Assert.True(mc.Stabilized);
        Assert.Equal(0, mc.Trials % 10_000);
        Assert.True(mc.Trials >= 20_000);
        // stabilised to delta = 0.05 for u = 2.0; the interval then lies within a few delta of the exact 3.9199
        Check.Absolute(3.9199, mc.CoverageInterval.High, 0.1, "high");
        Assert.True(mc.Validation!.Validated);
    }

    [Fact]
    public void AdaptiveProcedureReportsWhenTheCeilingStopsIt()
    {
        var budget = MixedBudget();
        var mc = MonteCarloEngine.Run(budget, new MonteCarloOptions { Seed = 5, MaxTrials = 30_000, SignificantDigits = 4 });
        Assert.False(mc.Stabilized);
        Assert.True(mc.Trials <= 30_000);
    }

    [Fact]
    public void FixedTrialsAboveTheCeilingAreNotComputable()
    {
        var ex = Assert.Throws<MetrologyException>(() => MonteCarloEngine.Run(MixedBudget(), new MonteCarloOptions { Trials = 2_000_000, MaxTrials = 1_000_000 }));
        Assert.Equal("monteCarlo.trials", ex.Parameter);
        Assert.True(ex.NotComputable);
    }

    [Fact]
    public void TooFewTrialsForTheCoverageProbabilityAreRefused()
    {
        // J = ceil(100 / (1 - 0.9545)) = 2198 (JCGM 101 7.9.4 b)
        Assert.Equal(2198, MonteCarloEngine.MinimumTrials(0.9545));
        var ex = Assert.Throws<MetrologyException>(() => MonteCarloEngine.Run(MixedBudget(), new MonteCarloOptions { Trials = 2000 }));
        Assert.Equal("monteCarlo.trials", ex.Parameter);
    }

    [Fact]
    public void CorrelatedNormalInputsReproduceTheGumVariance()
    {
        // Two N(0,1) with r = 0.6: u(y)^2 = 1 + 1 + 2 x 0.6 = 3.2 exactly, for the GUM and the copula alike.
        var budget = UncertaintyBudget.Create([Normal("a", 1), Normal("b", 1)], [Correlation.Between("a", "b", 0.6)], 0.95);
        var (gum, mc) = Run(budget);
        Check.Relative(Math.Sqrt(3.2), gum.CombinedStandardUncertainty, 1e-14);
        Check.Relative(Math.Sqrt(3.2), mc.StandardUncertainty, 0.005, "MC u(y)");
        Check.Absolute(1.959964 * Math.Sqrt(3.2), mc.CoverageInterval.High, 0.02, "high");
    }

    [Fact]
    public void CorrelatedRectangularInputsFollowTheGaussianCopula()
    {
        // Through a Gaussian copula with parameter r, two uniforms have Pearson correlation (6/pi) asin(r/2)
        // (a standard property of the Gaussian copula: Spearman's rho). r = 0.8: rho = 0.7859, u(y)^2 = 2 (1 + rho).
        var budget = UncertaintyBudget.Create([Rect("a", 1), Rect("b", 1)], [Correlation.Between("a", "b", 0.8)], 0.95);
        var mc = MonteCarloEngine.Run(budget, new MonteCarloOptions { Trials = Million, Seed = 3 });
        double rho = 6 / Math.PI * Math.Asin(0.4);
        Check.Relative(Math.Sqrt(2 * (1 + rho)), mc.StandardUncertainty, 0.005, "MC u(y)");
    }

    [Fact]
    public void CorrelatedStudentAndUShapedInputsKeepTheirMarginals()
    {
        // With r = 0 stated against a third input, the copula path is taken but the marginal spread must stay that of
        // the input: t_5 scale 1 has sd sqrt(5/3); arcsine of half-width 1 has sd 1/sqrt(2).
        var t = Contribution.Create("t", InputDistribution.StudentT(1, 5));
        var arc = Contribution.Create("arc", InputDistribution.UShaped(1));
        var n = Normal("n", 1e-9);
        var budget = UncertaintyBudget.Create([t, arc, n], [Correlation.Between("t", "n", 0.3), Correlation.Between("arc", "n", 0.3)], 0.95);
        var mc = MonteCarloEngine.Run(budget, new MonteCarloOptions { Trials = Million, Seed = 9 });
        // t and arc are each correlated 0.3 with n, hence 0.09 with each other in the copula; their product term is small.
        double tsd = Math.Sqrt(5.0 / 3.0);
        double arcsd = 1 / Math.Sqrt(2);
        double lower = Math.Sqrt(tsd * tsd + arcsd * arcsd);
        Assert.InRange(mc.StandardUncertainty, lower * 0.99, Math.Sqrt(tsd * tsd + arcsd * arcsd + 2 * 0.09 * tsd * arcsd) * 1.01);
    }

    [Fact]
    public void NonZeroEstimatesShiftTheOutput()
    {
        var a = Contribution.Create("a", InputDistribution.NormalFromStandard(0.1), estimate: 5, sensitivity: 2);
        var b = Contribution.Create("b", InputDistribution.Rectangular(0.1), estimate: 1, sensitivity: -1);
        var mc = MonteCarloEngine.Run(UncertaintyBudget.Create([a, b]), new MonteCarloOptions { Trials = 100_000, Seed = 1 });
        Check.Absolute(9.0, mc.Estimate, 0.005, "y");
    }

    internal static UncertaintyBudget MixedBudget() => UncertaintyBudget.Create(
    [
        Contribution.Create("reference", InputDistribution.NormalFromExpanded(2e-12, 2)),
        Contribution.Create("resolution", InputDistribution.Rectangular(5e-12)),
        Contribution.Create("repeatability", InputDistribution.StudentT(3e-12, 9), type: EvaluationType.A),
        Contribution.Create("orientation", InputDistribution.UShaped(4e-11)),
        Contribution.Create("temperature", InputDistribution.Triangular(1e-11)),
    ]);
}
