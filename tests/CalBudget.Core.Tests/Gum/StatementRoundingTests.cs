using CalBudget.Core.Gum;

namespace CalBudget.Core.Tests.Gum;

public class StatementRoundingTests
{
    // JCGM 100:2008 7.2.6 and ILAC-P14: U to at most two significant digits, the value to the same decimal place.
    // JCGM 100 7.2.2 gives m_s = 100.021 47 g with u_c = 0.35 mg, i.e. 100.02147(35) g: the value keeps five decimals.
    [Fact]
    public void ValueIsRoundedToTheLastDigitOfTheUncertainty()
    {
        var s = StatementRounding.Round(100.0214739, 0.000354);
        Assert.Equal(0.00035, s.Uncertainty);
        Assert.Equal(100.02147, s.Value);
        Assert.Equal(-5, s.LastDigitExponent);
    }

    [Theory]
    [InlineData(1.2345e-10, 4.8123e-11, 1.23e-10, 4.8e-11)]
    [InlineData(-3.3333e-9, 2.45e-10, -3.33e-9, 2.5e-10)] // 2.45 written in decimal rounds half away from zero
    [InlineData(0.0, 9.96e-12, 0.0, 1.0e-11)]             // carries into a new leading digit
    [InlineData(12345.678, 93.4, 12346, 93)]
    public void RoundsToTwoSignificantDigits(double value, double u, double expectedValue, double expectedU)
    {
        var s = StatementRounding.Round(value, u);
        Check.Relative(expectedU, s.Uncertainty, 1e-15);
        if (expectedValue == 0)
        {
            Assert.Equal(0.0, s.Value);
        }
        else
        {
            Check.Relative(expectedValue, s.Value, 1e-15);
        }
    }

    [Fact]
    public void RoundingUpNeverUnderstates()
    {
        Assert.Equal(4.9e-11, StatementRounding.Round(0, 4.81e-11, mode: UncertaintyRounding.Up).Uncertainty, 1e-25);
        Assert.Equal(4.8e-11, StatementRounding.Round(0, 4.8e-11, mode: UncertaintyRounding.Up).Uncertainty, 1e-25);
    }

    [Fact]
    public void ScientificFormShowsBothNumbersToTheSamePlace()
    {
        Assert.Equal("(1.23 ± 0.48) × 10^-10", StatementRounding.Round(1.2345e-10, 4.8123e-11).ToScientific());
        Assert.Equal("(-3.33 ± 0.25) × 10^-9", StatementRounding.Round(-3.3333e-9, 2.45e-10).ToScientific());
        Assert.Equal("12346 ± 93", StatementRounding.Round(12345.678, 93.4).ToScientific());
        Assert.Equal("100.02147 ± 0.00035", StatementRounding.Round(100.0214739, 0.000354).ToScientific());
    }

    [Theory]
    [InlineData(0.0)]
    [InlineData(-1.0)]
    [InlineData(double.NaN)]
    public void NonPositiveUncertaintyIsRefused(double u)
    {
        Assert.Throws<MetrologyException>(() => StatementRounding.Round(1, u));
    }
}
