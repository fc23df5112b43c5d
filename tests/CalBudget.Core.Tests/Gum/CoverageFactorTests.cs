using CalBudget.Core.Gum;

namespace CalBudget.Core.Tests.Gum;

public class CoverageFactorTests
{
    // JCGM 100:2008 Table G.2, t_p(nu) for p = 95.45 %, 99 % and 95 % (seen in a copy; the 95.45 % column is for the
    // exact probability 0.954500 that gives k = 2 for infinite nu). The table prints two decimals, so the check allows
    // half a unit of the last printed digit.
    [Theory]
    [InlineData(1, 0.954500, 13.97)]
    [InlineData(2, 0.954500, 4.53)]
    [InlineData(3, 0.954500, 3.31)]
    [InlineData(5, 0.954500, 2.65)]
    [InlineData(10, 0.954500, 2.28)]
    [InlineData(20, 0.954500, 2.13)]
    [InlineData(50, 0.954500, 2.05)]
    [InlineData(1, 0.99, 63.66)]
    [InlineData(2, 0.99, 9.92)]
    [InlineData(3, 0.99, 5.84)]
    [InlineData(5, 0.99, 4.03)]
    [InlineData(10, 0.99, 3.17)]
    [InlineData(20, 0.99, 2.85)]
    [InlineData(50, 0.99, 2.68)]
    [InlineData(1, 0.95, 12.71)]
    [InlineData(2, 0.95, 4.30)]
    [InlineData(3, 0.95, 3.18)]
    [InlineData(5, 0.95, 2.57)]
    [InlineData(10, 0.95, 2.23)]
    [InlineData(20, 0.95, 2.09)]
    [InlineData(50, 0.95, 2.01)]
    public void StudentFactorsMatchJcgm100TableG2(double nu, double p, double table)
    {
        Check.Absolute(table, CoverageFactor.TwoSided(p, nu), 0.005 + 1e-9, $"t_{p}({nu})");
    }

    // JCGM 100 Table G.2, last row (nu infinite): 2.000, 2.576, 1.960, and k = 1 for 68.27 %.
    [Theory]
    [InlineData(0.954500, 2.000)]
    [InlineData(0.997300, 3.000)]
    [InlineData(0.682689, 1.000)]
    [InlineData(0.99, 2.576)]
    [InlineData(0.95, 1.960)]
    public void InfiniteDegreesOfFreedomGiveTheNormalFactor(double p, double table)
    {
        Check.Absolute(table, CoverageFactor.TwoSided(p, double.PositiveInfinity), 0.0005, $"k_{p}");
    }

    [Fact]
    public void EffectiveDegreesOfFreedomAreTruncatedToTheNextLowerInteger()
    {
        // JCGM 100 G.4.1 note 1: nu_eff = 16.7 is used as 16 (the H.1 example: t_99(16) = 2.92).
        Assert.Equal(CoverageFactor.TwoSided(0.99, 16), CoverageFactor.ForEffectiveDegreesOfFreedom(0.99, 16.7));
        Check.Absolute(2.92, CoverageFactor.ForEffectiveDegreesOfFreedom(0.99, 16.7), 0.005);
    }

    [Fact]
    public void LargeDegreesOfFreedomApproachTheNormalFactor()
    {
        double normal = CoverageFactor.TwoSided(0.95, double.PositiveInfinity);
        double large = CoverageFactor.TwoSided(0.95, 1e6);
        Check.Relative(normal, large, 1e-5);
        Assert.True(large > normal);
    }

    [Theory]
    [InlineData(0.0)]
    [InlineData(1.0)]
    [InlineData(-0.5)]
    [InlineData(double.NaN)]
    public void CoverageProbabilityOutsideTheOpenUnitIntervalIsRefused(double p)
    {
        var ex = Assert.Throws<MetrologyException>(() => CoverageFactor.TwoSided(p, 10));
        Assert.Equal("coverageProbability", ex.Parameter);
    }

    [Fact]
    public void EffectiveDegreesOfFreedomBelowOneAreNotComputable()
    {
        var ex = Assert.Throws<MetrologyException>(() => CoverageFactor.ForEffectiveDegreesOfFreedom(0.95, 0.6));
        Assert.True(ex.NotComputable);
    }

    [Theory]
    [InlineData(0.9545)]
    [InlineData(0.99)]
    public void HugeDegreesOfFreedomJoinTheNormalLimitSmoothly(double p)
    {
        // a budget whose only finite-dof term has a tiny share gets nu_eff ~ 1e26 from Welch-Satterthwaite: k is the normal
        // quantile (JCGM 100 G.3.2: t_p(nu) -> z_p), and the expansion used from 1e6 on meets the exact quantile there
        double z = CoverageFactor.TwoSided(p, double.PositiveInfinity);
        Assert.Equal(z, CoverageFactor.ForEffectiveDegreesOfFreedom(p, 1.9e26), 12);
        double nu = CoverageFactor.LargeDegreesOfFreedom * 0.999;
        double exact = CoverageFactor.TwoSided(p, nu);
        Assert.Equal(z + (z * z * z + z) / (4 * nu), exact, 9); // within the root finder's tolerance
        Assert.InRange(CoverageFactor.TwoSided(p, CoverageFactor.LargeDegreesOfFreedom), z, exact);
    }
}
