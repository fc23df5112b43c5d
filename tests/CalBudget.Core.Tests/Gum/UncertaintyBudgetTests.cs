using CalBudget.Core.Gum;

namespace CalBudget.Core.Tests.Gum;

public class UncertaintyBudgetTests
{
    private static Contribution Normal(string name, double u, double? nu = null, double c = 1) =>
        Contribution.Create(name, InputDistribution.NormalFromStandard(u), sensitivity: c, degreesOfFreedom: nu);

    [Fact]
    public void EndGaugeExampleOfJcgm100AnnexH1GivesItsTotals()
    {
        // JCGM 100:2008 H.1 (inputs seen in a public reproduction; totals from memory, confirmed by computation):
        // u(l_s) = 25 nm (nu 18), u(d) = 9.7 nm (nu 25.6), delta-alpha term 2.9 nm (nu 50), delta-theta term 16.6 nm (nu 2).
        var budget = UncertaintyBudget.Create(
            [Normal("l_s", 25, 18), Normal("d", 9.7, 25.6), Normal("delta-alpha", 2.9, 50), Normal("delta-theta", 16.6, 2)],
            coverageProbability: 0.99);
        var result = budget.Evaluate();

        // u_c = sqrt(25^2 + 9.7^2 + 2.9^2 + 16.6^2) = sqrt(1003.06) = 31.67 nm, stated as 32 nm.
        Check.Relative(Math.Sqrt(1003.06), result.CombinedStandardUncertainty, 1e-12, "u_c");
        Assert.Equal(32, Math.Round(result.CombinedStandardUncertainty));
        // nu_eff = 31.67^4 / (25^4/18 + 9.7^4/25.6 + 2.9^4/50 + 16.6^4/2) = 1006129 / 60015.4 = 16.76; H.1 prints 16.7
        // (one decimal, cut off) and truncates it to 16 for the coverage factor.
        Assert.InRange(result.EffectiveDegreesOfFreedom, 16.7, 16.8);
        Assert.Equal(16, Math.Floor(result.EffectiveDegreesOfFreedom));
        // t_99(16) = 2.92; U_99 = 2.92 x 32 = 93 nm.
        Check.Absolute(2.92, result.CoverageFactor, 0.005, "k");
        var stated = StatementRounding.Round(0, result.ExpandedUncertainty);
        Assert.Equal(93, stated.Uncertainty);
    }

    [Theory]
    // JCGM 100 4.3.7 (a/sqrt 3), 4.3.9 (a/sqrt 6), JCGM 101 6.4.6 (arcsine: a/sqrt 2), 4.3.4 (U/k).
    [InlineData("rectangular", 3.0, 1.7320508075688772)]
    [InlineData("triangular", 6.0, 2.449489742783178)]
    [InlineData("u-shaped", 2.0, 1.4142135623730951)]
    public void BoundedDistributionsConvertHalfWidthToStandardUncertainty(string kind, double a, double expected)
    {
        var d = kind switch
        {
            "rectangular" => InputDistribution.Rectangular(a),
            "triangular" => InputDistribution.Triangular(a),
            _ => InputDistribution.UShaped(a),
        };
        Check.Relative(expected, d.StandardUncertainty, 1e-15);
        Assert.Equal(a, d.HalfWidth);
    }

    [Fact]
    public void NormalFromExpandedDividesByTheCoverageFactor()
    {
        Check.Relative(1e-12, InputDistribution.NormalFromExpanded(2e-12, 2).StandardUncertainty, 1e-15);
    }

    [Fact]
    public void BoundedFromStandardRoundTrips()
    {
        var d = InputDistribution.BoundedFromStandard(DistributionKind.Triangular, 2.0);
        Check.Relative(2.0 * Math.Sqrt(6), d.HalfWidth, 1e-15);
        Check.Relative(2.0, d.StandardUncertainty, 1e-15);
    }

    [Fact]
    public void StudentTUsesItsScaleAsStandardUncertaintyAndItsDegreesOfFreedom()
    {
        var c = Contribution.Create("A", InputDistribution.StudentT(3e-12, 9), type: EvaluationType.A);
        Assert.Equal(3e-12, c.StandardUncertainty);
        Assert.Equal(9, c.DegreesOfFreedom);
    }

    [Fact]
    public void CorrelationAddsItsCrossTerm()
    {
        // JCGM 100 eq. (13): u_c^2 = u1^2 + u2^2 + 2 r u1 u2.
        var inputs = new[] { Normal("a", 1), Normal("b", 1) };
        Check.Relative(2.0, UncertaintyBudget.Create(inputs, [Correlation.Between("a", "b", 1)]).Evaluate().CombinedStandardUncertainty, 1e-15);
        Check.Relative(Math.Sqrt(3), UncertaintyBudget.Create(inputs, [Correlation.Between("a", "b", 0.5)]).Evaluate().CombinedStandardUncertainty, 1e-15);
        Check.Relative(1.0, UncertaintyBudget.Create(inputs, [Correlation.Between("b", "a", -0.5)]).Evaluate().CombinedStandardUncertainty, 1e-15);
    }

    [Fact]
    public void NegativeSensitivityTurnsTheSignOfTheCrossTerm()
    {
        // eq. (13) with c1 = 1, c2 = -1, r = 0.5: u_c^2 = 1 + 1 - 2 x 0.5 = 1.
        var inputs = new[] { Normal("a", 1), Normal("b", 1, c: -1) };
        Check.Relative(1.0, UncertaintyBudget.Create(inputs, [Correlation.Between("a", "b", 0.5)]).Evaluate().CombinedStandardUncertainty, 1e-15);
    }

    [Fact]
    public void FullyCancellingCorrelationIsNotComputable()
    {
        var inputs = new[] { Normal("a", 1), Normal("b", 1) };
        var ex = Assert.Throws<MetrologyException>(() => UncertaintyBudget.Create(inputs, [Correlation.Between("a", "b", -1)]).Evaluate());
        Assert.True(ex.NotComputable);
    }

    [Fact]
    public void CorrelationMatrixThatIsNotPositiveSemidefiniteIsRefused()
    {
        // r12 = r13 = 0.9 ties b and c to a, so r23 = -0.9 is impossible: its eigenvalues are 1.9, 1.9 and -0.8 (by hand).
        var inputs = new[] { Normal("a", 1), Normal("b", 1), Normal("c", 1) };
        var ex = Assert.Throws<MetrologyException>(() => UncertaintyBudget.Create(inputs,
            [Correlation.Between("a", "b", 0.9), Correlation.Between("a", "c", 0.9), Correlation.Between("b", "c", -0.9)]));
        Assert.Equal("correlations", ex.Parameter);
        Assert.True(ex.NotComputable);
    }

    [Fact]
    public void WelchSatterthwaiteIgnoresInfiniteDegreesOfFreedomAndCombinesTheRest()
    {
        // JCGM 100 eq. (G.2b) by hand: u_c^2 = 9 + 16 = 25; nu_eff = 625 / (3^4 / 4) = 625 / 20.25 = 30.864...
        var r = UncertaintyBudget.Create([Normal("a", 3, 4), Normal("b", 4)]).Evaluate();
        Check.Relative(625 / 20.25, r.EffectiveDegreesOfFreedom, 1e-13);
        Assert.True(double.IsPositiveInfinity(UncertaintyBudget.Create([Normal("a", 3), Normal("b", 4)]).Evaluate().EffectiveDegreesOfFreedom));
    }

    [Fact]
    public void SharesAndContributionsFollowTheirDefinitions()
    {
        var r = UncertaintyBudget.Create([Normal("a", 3, c: -2), Normal("b", 8)]).Evaluate();
        // |c u| = 6 and 8; u_c = 10; shares 0.36 and 0.64
        Assert.Equal(6, r.Contributions[0].Contribution);
        Check.Relative(0.36, r.Contributions[0].VarianceShare, 1e-14);
        Check.Relative(0.64, r.Contributions[1].VarianceShare, 1e-14);
        Check.Relative(10, r.CombinedStandardUncertainty, 1e-15);
    }

    [Fact]
    public void EstimateIsTheSensitivityWeightedSum()
    {
        var a = Contribution.Create("a", InputDistribution.NormalFromStandard(1), estimate: 2, sensitivity: 3);
        var b = Contribution.Create("b", InputDistribution.Rectangular(1), estimate: -1, sensitivity: 0.5);
        Assert.Equal(5.5, UncertaintyBudget.Create([a, b]).Evaluate().Estimate);
    }

    [Fact]
    public void DuplicateNamesAreRefusedNamingTheSecond()
    {
        var ex = Assert.Throws<MetrologyException>(() => UncertaintyBudget.Create([Normal("a", 1), Normal("a", 2)]));
        Assert.Equal("contributions[1].name", ex.Parameter);
    }

    [Fact]
    public void EmptyBudgetIsRefused()
    {
        Assert.Equal("contributions", Assert.Throws<MetrologyException>(() => UncertaintyBudget.Create([])).Parameter);
    }

    [Fact]
    public void CorrelationNamingAnUnknownInputIsRefused()
    {
        var ex = Assert.Throws<MetrologyException>(() => UncertaintyBudget.Create([Normal("a", 1)], [Correlation.Between("a", "zz", 0.1)]));
        Assert.Equal("correlations[0].between", ex.Parameter);
    }

    [Theory]
    [InlineData(-1.0)]
    [InlineData(double.NaN)]
    [InlineData(double.PositiveInfinity)]
    [InlineData(double.NegativeInfinity)]
    public void InvalidUncertaintiesAreRefused(double u)
    {
        Assert.Throws<MetrologyException>(() => InputDistribution.NormalFromStandard(u));
        Assert.Throws<MetrologyException>(() => InputDistribution.Rectangular(u));
        Assert.Throws<MetrologyException>(() => InputDistribution.NormalFromExpanded(u, 2));
    }

    [Theory]
    [InlineData(0.0)]
    [InlineData(-2.0)]
    [InlineData(double.NaN)]
    public void InvalidCoverageFactorsAndDegreesOfFreedomAreRefused(double v)
    {
        Assert.Equal("coverageFactor", Assert.Throws<MetrologyException>(() => InputDistribution.NormalFromExpanded(1, v)).Parameter);
        Assert.Equal("degreesOfFreedom", Assert.Throws<MetrologyException>(() => InputDistribution.StudentT(1, v)).Parameter);
        Assert.Equal("degreesOfFreedom", Assert.Throws<MetrologyException>(() =>
            Contribution.Create("a", InputDistribution.NormalFromStandard(1), degreesOfFreedom: v)).Parameter);
    }

    [Theory]
    [InlineData(1.5)]
    [InlineData(-1.01)]
    [InlineData(double.NaN)]
    public void CorrelationCoefficientsOutsideMinusOneToOneAreRefused(double r)
    {
        Assert.Equal("coefficient", Assert.Throws<MetrologyException>(() => Correlation.Between("a", "b", r)).Parameter);
    }
}
