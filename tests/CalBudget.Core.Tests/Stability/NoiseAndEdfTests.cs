using CalBudget.Core.Stability;

namespace CalBudget.Core.Tests.Stability;

public class NoiseAndEdfTests
{
    [Theory]
    [InlineData(2, "white PM")]
    [InlineData(0, "white FM")]
    [InlineData(-2, "random-walk FM")]
    public void LagOneAutocorrelationIdentifiesTheNoise(int alpha, string name)
    {
        var y = ReferenceData.Noise(alpha, 4096, seed: 17 + alpha);
        var r = StabilityAnalysis.Analyse(y, StabilityDataType.Frequency, 1, [StabilityStatistic.Oadev], [1, 4, 16]);
        Assert.All(r.Noise, n =>
        {
            Assert.Equal(alpha, n.Alpha);
            Assert.Equal(name, n.Type);
        });
    }

    // The service's identification (averages from the phase already formed, the trend's moments taken while averaging,
    // the first autocorrelation of the residuals without storing them) against SP 1065 5.6 written plainly
    // (TextbookDeviations.NoiseAlpha), for white PM, white FM and random-walk FM, with and without gaps, at many factors.
    [Theory]
    [InlineData(2, false)]
    [InlineData(0, false)]
    [InlineData(-2, false)]
    [InlineData(2, true)]
    [InlineData(0, true)]
    [InlineData(-2, true)]
    public void IdentificationAgreesWithTheTextbookMethod(int alpha, bool gaps)
    {
        var y = ReferenceData.Noise(alpha, 6000, seed: 40 + alpha).Select(v => 3e-9 + 1e-11 * v).ToArray();
        if (gaps)
        {
            foreach (int i in new[] { 5, 6, 700, 2999, 5100 })
            {
                y[i] = double.NaN;
            }
        }

        int[] factors = [1, 2, 3, 5, 8, 16, 30, 64, 150];
        var r = StabilityAnalysis.Analyse(y, StabilityDataType.Frequency, 1, [StabilityStatistic.Oadev], factors);
        Assert.All(r.Noise, n => Assert.Equal(TextbookDeviations.NoiseAlpha(y, n.AveragingFactor, 2), n.Alpha));
    }

    // The lag-1 autocorrelation of the residuals, taken in one pass without storing them, equals the one of the residuals
    // stored (the trend subtracted in place), for a series with a large quadratic trend.
    [Theory]
    [InlineData(1, 31)]
    [InlineData(2, 1000)]
    [InlineData(2, 100_003)]
    public void ResidualAutocorrelationInOnePassEqualsTheStoredOne(int degree, int n)
    {
        var noise = ReferenceData.Noise(0, n, seed: n);
        var z = Enumerable.Range(0, n).Select(i => 5.0 + 1e-3 * i - 2e-7 * i * (double)i + noise[i]).ToArray();
        var trend = NoiseIdentification.FitTrend(n, degree, NoiseIdentification.Moments(z, (n - 1) / 2.0));
        double? onePass = NoiseIdentification.LagOneOfResiduals(z, trend);
        NoiseIdentification.Subtract(z, trend);
        double? stored = NoiseIdentification.LagOne(z);
        Assert.NotNull(onePass);
        Assert.Equal(stored!.Value, onePass.Value, 1e-10);
    }

    [Fact]
    public void TooFewPointsAreNotIdentified()
    {
        var r = StabilityAnalysis.Analyse(ReferenceData.Noise(0, 200, 1), StabilityDataType.Frequency, 1, [StabilityStatistic.Oadev], [1, 64]);
        Assert.NotNull(r.Noise[0].Alpha);
        Assert.Null(r.Noise[1].Alpha); // 200 / 64 = 3 points
        Assert.Equal("not identified", r.Noise[1].Type);
    }

    // NIST SP 1065 Table 5: simple approximations for the overlapping ADEV edf, N phase points, averaging factor m
    // (formulas as quoted in ../shared/DOMAIN.md; flicker FM at m = 1 with the square, as SP 1065 prints it).
    private static double Table5(int alpha, double n, double m) => alpha switch
    {
        2 => (n + 1) * (n - 2 * m) / (2 * (n - m)),
        1 => Math.Exp(Math.Sqrt(Math.Log((n - 1) / (2 * m)) * Math.Log((2 * m + 1) * (n - 1) / 4))),
        0 => (3 * (n - 1) / (2 * m) - 2 * (n - 2) / n) * 4 * m * m / (4 * m * m + 5),
        -1 => m == 1 ? 2 * (n - 2) * (n - 2) / (2.3 * n - 4.9) : 5 * n * n / (4 * m * (n + 3 * m)),
        _ => (n - 2) / (m * (n - 3) * (n - 3)) * ((n - 1) * (n - 1) - 3 * m * (n - 1) + 4 * m * m),
    };

    [Theory]
    [InlineData(2, 1001, 1)]
    [InlineData(2, 1001, 10)]
    [InlineData(2, 1001, 100)]
    [InlineData(1, 1001, 10)]
    [InlineData(1, 1001, 100)]
    [InlineData(0, 1001, 1)]
    [InlineData(0, 1001, 10)]
    [InlineData(0, 1001, 100)]
    [InlineData(-1, 1001, 1)]
    [InlineData(-1, 1001, 10)]
    [InlineData(-1, 1001, 100)]
    [InlineData(-2, 1001, 1)]
    [InlineData(-2, 1001, 10)]
    [InlineData(-2, 1001, 100)]
    [InlineData(0, 100001, 1000)]
    public void OverlappingAllanEdfAgreesWithSp1065Table5(int alpha, int n, int m)
    {
        double computed = EquivalentDegreesOfFreedom.Compute(StabilityStatistic.Oadev, alpha, m, n - 2 * m, n);
        // Table 5's forms are approximations fitted to the exact values (SP 1065 says within a few per cent); flicker PM
        // depends weakly on the measurement bandwidth, which the closed form fixes and the computation does not.
        double tolerance = alpha == 1 ? 0.25 : 0.1;
        Check.Relative(Table5(alpha, n, m), computed, tolerance, $"alpha {alpha}, N {n}, m {m}");
    }

    [Fact]
    public void WhiteFmEdfOfNonOverlappingAllanIsTheTermCount()
    {
        // Non-overlapping first differences of white-FM averages are correlated only with their neighbours (r = -1/2):
        // edf = T^2 / (T + 2 (T - 1) / 4), which is close to 2T/3 (derived by hand from the definition).
        int t = 99;
        double expected = (double)t * t / (t + 2.0 * (t - 1) / 4);
        Check.Relative(expected, EquivalentDegreesOfFreedom.Compute(StabilityStatistic.Adev, 0, 10, t, 1001), 1e-9);
    }

    [Fact]
    public void TotdevEdfFollowsSp1065Table7()
    {
        // Table 7: edf = b N/m - c; white FM (1.50, 0), flicker FM (1.17, 0.22), random-walk FM (0.93, 0.36)
        Check.Relative(1.50 * 1000 / 10, EquivalentDegreesOfFreedom.Compute(StabilityStatistic.Totdev, 0, 10, 999, 1001), 1e-12);
        Check.Relative(1.17 * 1000 / 10 - 0.22, EquivalentDegreesOfFreedom.Compute(StabilityStatistic.Totdev, -1, 10, 999, 1001), 1e-12);
        Check.Relative(0.93 * 1000 / 10 - 0.36, EquivalentDegreesOfFreedom.Compute(StabilityStatistic.Totdev, -2, 10, 999, 1001), 1e-12);
    }

    [Theory]
    [InlineData(StabilityStatistic.Mdev)]
    [InlineData(StabilityStatistic.Hdev)]
    [InlineData(StabilityStatistic.Ohdev)]
    [InlineData(StabilityStatistic.Adev)]
    public void EdfIsPositiveAndBelowTheTermCountForEveryNoise(StabilityStatistic statistic)
    {
        foreach (int alpha in new[] { 2, 1, 0, -1, -2 })
        {
            foreach (int m in new[] { 1, 8, 64 })
            {
                int terms = statistic is StabilityStatistic.Adev or StabilityStatistic.Hdev ? 10_000 / m - 3 : 10_000 - 3 * m;
                double edf = EquivalentDegreesOfFreedom.Compute(statistic, alpha, m, terms, 10_001);
                Assert.InRange(edf, 1, terms * 1.0001);
            }
        }
    }
}

public class TimebaseTypeATests
{
    [Fact]
    public void WhiteFmUsesTheStandardDeviationOfTheMean()
    {
        var y = ReferenceData.Noise(0, 2000, 5).Select(v => 1e-9 + 1e-11 * v).ToArray();
        var r = TimebaseTypeA.Evaluate(y, 1);
        double mean = y.Average();
        double sdom = Math.Sqrt(y.Sum(v => (v - mean) * (v - mean)) / (y.Length - 1) / y.Length); // JCGM 100 eq. (5)
        Assert.Equal(TypeAEstimator.StandardDeviationOfMean, r.Estimator);
        Assert.Equal(0, r.NoiseAlpha);
        Check.Relative(mean, r.Mean, 1e-12);
        Check.Relative(sdom, r.StandardUncertainty, 1e-9);
        Assert.Equal(1999, r.DegreesOfFreedom);
        Assert.Contains("white FM", r.Reason, StringComparison.OrdinalIgnoreCase);
    }

    [Fact]
    public void RandomWalkFmCarriesTheAllanVarianceToTheRunsLength()
    {
        var y = ReferenceData.Noise(-2, 2000, 6).Select(v => 1e-12 * v).ToArray();
        var r = TimebaseTypeA.Evaluate(y, 1);
        Assert.Equal(TypeAEstimator.AllanDeviation, r.Estimator);
        Assert.Equal(-2, r.NoiseAlpha);
        // the standard deviation of the mean understates a random walk's wander by a wide margin
        double mean = y.Average();
        double sdom = Math.Sqrt(y.Sum(v => (v - mean) * (v - mean)) / (y.Length - 1) / y.Length);
        Assert.True(r.StandardUncertainty > 3 * sdom);
        Assert.True(r.DegreesOfFreedom >= TimebaseTypeA.MinimumDegreesOfFreedom);
        // u^2 close to AVAR(m) x N / m for random-walk FM (sigma_y^2 proportional to tau; the fitted law a/m + b + c m is nearly
        // all c m here), the Allan variance from the analysis itself
        int m = r.AveragingFactor!.Value;
        var oadev = StabilityAnalysis.Analyse(y, StabilityDataType.Frequency, 1, [StabilityStatistic.Oadev], [m]).Results[StabilityStatistic.Oadev][0];
        Check.Relative(oadev.Deviation * Math.Sqrt(2000.0 / m), r.StandardUncertainty, 0.05);
        Assert.Contains("a/m + b + c m", r.Reason, StringComparison.Ordinal);
        Check.Relative(EquivalentDegreesOfFreedom.Compute(StabilityStatistic.Oadev, -2, m, 2001 - 2 * m, 2001), r.DegreesOfFreedom, 1e-9); // edf for random-walk FM at m
    }

    [Fact]
    public void FewReadingsSaySoAndUseTheStandardDeviationOfTheMean()
    {
        var r = TimebaseTypeA.Evaluate(new double[] { 1e-10, 1.2e-10, 0.9e-10, 1.1e-10 }, 10);
        Assert.Null(r.NoiseAlpha);
        Assert.True(r.DegreesOfFreedom <= 3);
        // the larger of the white-FM and flicker-FM estimates: never below the standard deviation of the mean
        Assert.True(r.StandardUncertainty >= Math.Sqrt(new[] { 1.0, 1.2, 0.9, 1.1 }.Select(v => (v - 1.05) * (v - 1.05)).Sum() / 3 / 4) * 1e-10 * 0.9999);
        Assert.Contains("not identified", r.Reason, StringComparison.Ordinal);
    }

    [Fact]
    public void FewerThanTwoReadingsAreNotComputable() =>
        Assert.True(Assert.Throws<MetrologyException>(() => TimebaseTypeA.Evaluate(new[] { 1e-10, double.NaN }, 1)).NotComputable);
}
