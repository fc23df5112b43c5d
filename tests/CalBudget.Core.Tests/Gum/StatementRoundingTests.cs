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
        Assert.Equal("(1.23 ± 0.48) × 10⁻¹⁰", StatementRounding.Round(1.2345e-10, 4.8123e-11).ToScientific());
        Assert.Equal("(-3.33 ± 0.25) × 10⁻⁹", StatementRounding.Round(-3.3333e-9, 2.45e-10).ToScientific());
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

public class NotationTests
{
    [Theory]
    [InlineData(2.3175e-9, 3, "2.32 × 10⁻⁹")]
    [InlineData(-1.5e-12, 2, "-1.5 × 10⁻¹²")]
    [InlineData(9.96e-10, 2, "1.0 × 10⁻⁹")]        // rounding carries into the exponent
    [InlineData(0.0254, 3, "0.0254")]             // plain decimals between 0.001 and 10,000
    [InlineData(12345.6, 3, "1.23 × 10⁴")]
    [InlineData(0.0, 2, "0")]                     // no "-0" and no exponent for zero
    [InlineData(4e-10, 2, "4.0 × 10⁻¹⁰")]
    public void NumbersAreWrittenOneWayWithSuperscriptExponents(double value, int digits, string expected) =>
        Assert.Equal(expected, Notation.Scientific(value, digits));

    [Fact]
    public void IntervalsAndStatementsShareTheUncertaintysDecimalPlace()
    {
        // JCGM 100 7.2.6: U to two significant digits, the value (and an interval's ends) to the same decimal place
        Assert.Equal("[2.3122, 2.3229] × 10⁻⁹", Notation.Interval(2.31224e-9, 2.32286e-9));
        Assert.Equal("(2.3175 ± 0.0053) × 10⁻⁹", StatementRounding.Round(2.31754e-9, 5.3169e-12).ToScientific());
        Assert.Equal("10 MHz", Notation.Frequency(1e7));
        Assert.Equal("32.768 kHz", Notation.Frequency(32768));
    }

    [Theory]
    [InlineData(1.77, "1")]          // k = t(1) = 13.97 is taken from 1, so 1 is printed (JCGM 100 G.4.1)
    [InlineData(16.7, "16")]         // JCGM 100 H.1: nu_eff = 16.7, truncated to 16 for t_99
    [InlineData(12230695.9, "more than 10,000")]
    public void TheDegreesOfFreedomPrintedAreThoseTheCoverageFactorCameFrom(double nu, string expected) =>
        Assert.Equal(expected, Notation.DegreesOfFreedom(nu));
}
