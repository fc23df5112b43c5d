using CalBudget.Core.Stability;

namespace CalBudget.Core.Tests.Stability;

public class StabilityStatisticsTests
{
    private static readonly StabilityStatistic[] All = Enum.GetValues<StabilityStatistic>();

    private static StabilityResult Analyse(double[] values, int[] m, StabilityDataType type = StabilityDataType.Frequency, params StabilityStatistic[] statistics) =>
        StabilityAnalysis.Analyse(values, type, 1.0, statistics.Length == 0 ? All : statistics, m);

    private static double At(StabilityResult r, StabilityStatistic s, int m) => r.Results[s].Single(p => p.AveragingFactor == m).Deviation;

    // NIST SP 1065 section 12, 1000-point suite (seen, as reproduced in public test files; ../shared/CHECKS.md).
    [Theory]
    [InlineData(StabilityStatistic.Adev, 2.922319e-01, 9.965736e-02, 3.897804e-02)]
    [InlineData(StabilityStatistic.Oadev, 2.922319e-01, 9.159953e-02, 3.241343e-02)]
    [InlineData(StabilityStatistic.Mdev, 2.922319e-01, 6.172376e-02, 2.170921e-02)]
    [InlineData(StabilityStatistic.Tdev, 1.687202e-01, 3.563623e-01, 1.253382e+00)]
    [InlineData(StabilityStatistic.Hdev, 2.943883e-01, 1.052754e-01, 3.910860e-02)]
    [InlineData(StabilityStatistic.Ohdev, 2.943883e-01, 9.581083e-02, 3.237638e-02)]
    [InlineData(StabilityStatistic.Totdev, 2.922319e-01, 9.134743e-02, 3.406530e-02)]
    public void Sp1065SuiteMatchesThePublishedValues(StabilityStatistic statistic, double tau1, double tau10, double tau100)
    {
        var r = Analyse(ReferenceData.Sp1065Frequency(), [1, 10, 100], StabilityDataType.Frequency, statistic);
        Check.Relative(tau1, At(r, statistic, 1), 1e-6, $"{statistic} tau 1");
        Check.Relative(tau10, At(r, statistic, 10), 1e-6, $"{statistic} tau 10");
        Check.Relative(tau100, At(r, statistic, 100), 1e-6, $"{statistic} tau 100");
    }

    // NBS Monograph 140, Annex 8.E nine-point set (seen; ../shared/CHECKS.md).
    [Theory]
    [InlineData(StabilityStatistic.Adev, 91.22945, 115.8082)]
    [InlineData(StabilityStatistic.Oadev, 91.22945, 85.95287)]
    [InlineData(StabilityStatistic.Mdev, 91.22945, 74.78849)]
    [InlineData(StabilityStatistic.Tdev, 52.67135, 86.35831)]
    [InlineData(StabilityStatistic.Hdev, 70.80608, 116.7980)]
    [InlineData(StabilityStatistic.Ohdev, 70.80607, 85.61487)]
    [InlineData(StabilityStatistic.Totdev, 91.22945, 93.90379)]
    public void Nbs140NinePointSetMatchesThePublishedValues(StabilityStatistic statistic, double tau1, double tau2)
    {
        var r = Analyse(ReferenceData.Nbs140Frequency(), [1, 2], StabilityDataType.Frequency, statistic);
        Check.Relative(tau1, At(r, statistic, 1), 1e-6, $"{statistic} tau 1");
        Check.Relative(tau2, At(r, statistic, 2), 1e-6, $"{statistic} tau 2");
    }

    [Fact]
    public void PhaseInputGivesTheSameCurvesAsTheFrequencyItIntegrates()
    {
        var y = ReferenceData.Sp1065Frequency();
        var x = new double[y.Length + 1];
        for (int i = 0; i < y.Length; i++)
        {
            x[i + 1] = x[i] + y[i];
        }

        var fromY = Analyse(y, [1, 3, 16, 64]);
        var fromX = Analyse(x, [1, 3, 16, 64], StabilityDataType.Phase);
        foreach (var s in All)
        {
            foreach (int m in new[] { 1, 3, 16, 64 })
            {
                Check.Relative(At(fromY, s, m), At(fromX, s, m), 1e-9, $"{s} m {m}");
            }
        }
    }

    [Fact]
    public void AFrequencyOffsetChangesNothing()
    {
        // a 1e-8 offset on 1e-12-sized noise: the detrended phase keeps every digit that matters
        var y = ReferenceData.Sp1065Frequency().Select(v => 1e-8 + 1e-12 * v).ToArray();
        var r = Analyse(y, [1, 10, 100], StabilityDataType.Frequency, StabilityStatistic.Oadev, StabilityStatistic.Mdev);
        Check.Relative(1e-12 * 9.159953e-02, At(r, StabilityStatistic.Oadev, 10), 1e-6);
        Check.Relative(1e-12 * 2.170921e-02, At(r, StabilityStatistic.Mdev, 100), 1e-6);
    }

    [Theory]
    [InlineData(1)]
    [InlineData(2)]
    [InlineData(5)]
    [InlineData(17)]
    [InlineData(40)]
    public void FastFormsMatchTheTextbookOnDataWithGaps(int m)
    {
        var random = new Random(m);
        var y = Enumerable.Range(0, 600).Select(_ => random.NextDouble() - 0.5).ToArray();
        foreach (int gap in new[] { 7, 8, 250, 431, 432, 433 })
        {
            y[gap] = double.NaN;
        }

        var r = Analyse(y, [m], StabilityDataType.Frequency,
            StabilityStatistic.Adev, StabilityStatistic.Oadev, StabilityStatistic.Mdev, StabilityStatistic.Hdev, StabilityStatistic.Ohdev);
        void Same(StabilityStatistic s, (double Dev, int Count) expected)
        {
            var p = r.Results[s].Single();
            Assert.Equal(expected.Count, p.Count);
            Check.Relative(expected.Dev, p.Deviation, 1e-9, $"{s} m {m}");
        }

        Same(StabilityStatistic.Adev, TextbookDeviations.Adev(y, m));
        Same(StabilityStatistic.Oadev, TextbookDeviations.Oadev(y, m));
        Same(StabilityStatistic.Mdev, TextbookDeviations.Mdev(y, m));
        Same(StabilityStatistic.Hdev, TextbookDeviations.Hdev(y, m));
        Same(StabilityStatistic.Ohdev, TextbookDeviations.Ohdev(y, m));
    }

    [Theory]
    [InlineData(1)]
    [InlineData(3)]
    [InlineData(64)]
    [InlineData(149)]
    [InlineData(199)]
    [InlineData(200)]
    [InlineData(250)]
    [InlineData(300)]
    public void TheSharedPassMatchesTheTextbookWithoutGaps(int m)
    {
        // 600 readings, 601 phase points: the one pass per factor (vector lanes, their tails, and beyond MDEV's and OHDEV's
        // reach at m > 200 only the second differences) against the textbook double loops
        var random = new Random(m + 100);
        var y = Enumerable.Range(0, 600).Select(_ => 1e-11 * (random.NextDouble() - 0.5) + 3e-9).ToArray();
        var r = Analyse(y, [m], StabilityDataType.Frequency,
            StabilityStatistic.Oadev, StabilityStatistic.Mdev, StabilityStatistic.Tdev, StabilityStatistic.Ohdev, StabilityStatistic.Totdev);
        void Same(StabilityStatistic s, (double Dev, int Count) expected, bool reachable)
        {
            Assert.Equal(reachable ? 1 : 0, r.Results[s].Count);
            if (reachable)
            {
                Assert.Equal(expected.Count, r.Results[s][0].Count);
                Check.Relative(expected.Dev, r.Results[s][0].Deviation, 1e-9, $"{s} m {m}");
            }
        }

        Same(StabilityStatistic.Oadev, TextbookDeviations.Oadev(y, m), m <= 300);
        Same(StabilityStatistic.Totdev, TextbookDeviations.Totdev(y, m), m <= 300);
        Same(StabilityStatistic.Mdev, m <= 200 ? TextbookDeviations.Mdev(y, m) : default, m <= 200);
        Same(StabilityStatistic.Ohdev, m <= 200 ? TextbookDeviations.Ohdev(y, m) : default, m <= 200);
        if (m <= 200)
        {
            // TDEV is MDEV rescaled by tau / sqrt(3) (SP 1065 eq. (15))
            Check.Relative(r.Results[StabilityStatistic.Mdev][0].Deviation * m / Math.Sqrt(3), r.Results[StabilityStatistic.Tdev][0].Deviation, 1e-12);
        }
    }

    [Theory]
    [InlineData(1)]
    [InlineData(9)]
    [InlineData(150)]
    public void TotdevMatchesTheTextbookReflection(int m)
    {
        var random = new Random(3);
        var y = Enumerable.Range(0, 400).Select(_ => random.NextDouble()).ToArray();
        var r = Analyse(y, [m], StabilityDataType.Frequency, StabilityStatistic.Totdev);
        Check.Relative(TextbookDeviations.Totdev(y, m).Dev, r.Results[StabilityStatistic.Totdev].Single().Deviation, 1e-9);
    }

    [Fact]
    public void DefaultFactorsAreOctavesUpToEachStatisticsLimit()
    {
        var r = StabilityAnalysis.Analyse(ReferenceData.Sp1065Frequency(), StabilityDataType.Frequency, 1.0, [StabilityStatistic.Oadev, StabilityStatistic.Mdev]);
        // 1001 phase points: OADEV to m <= 500 (256), MDEV to m <= 333 (256)
        Assert.Equal([1, 2, 4, 8, 16, 32, 64, 128, 256], r.Results[StabilityStatistic.Oadev].Select(p => p.AveragingFactor));
        Assert.Equal(1001 - 2 * 256, r.Results[StabilityStatistic.Oadev][^1].Count);
        Assert.Equal(1001 - 3 * 256 + 1, r.Results[StabilityStatistic.Mdev][^1].Count);
    }

    [Fact]
    public void FactorsBeyondAStatisticsReachAreLeftOut()
    {
        var r = Analyse(ReferenceData.Nbs140Frequency(), [1, 2, 3, 4, 5]);
        Assert.Equal([1, 2, 3, 4], r.Results[StabilityStatistic.Oadev].Select(p => p.AveragingFactor)); // m <= (10-1)/2
        Assert.Equal([1, 2, 3], r.Results[StabilityStatistic.Ohdev].Select(p => p.AveragingFactor));    // m <= (10-1)/3
    }

    [Fact]
    public void IntervalsBracketTheDeviationAndNarrowWithMoreDegreesOfFreedom()
    {
        var r = Analyse(ReferenceData.Sp1065Frequency(), [1, 100], StabilityDataType.Frequency, StabilityStatistic.Oadev);
        var short_ = r.Results[StabilityStatistic.Oadev][0];
        var long_ = r.Results[StabilityStatistic.Oadev][1];
        Assert.InRange(short_.Deviation, short_.Interval.Low, short_.Interval.High);
        Assert.True(short_.DegreesOfFreedom > long_.DegreesOfFreedom);
        Assert.True(short_.Interval.High / short_.Interval.Low < long_.Interval.High / long_.Interval.Low);
    }

    [Fact]
    public void ChiSquaredIntervalFollowsSp1065Equation45()
    {
        // edf = 10: chi2(0.1585; 10) = 5.9765 and chi2(0.8415; 10) = 14.111 (computed with MathNet; textbook table values
        // for 10 degrees of freedom lie between 4.865 at 0.10 and 6.737 at 0.25, and 13.44 at 0.75 and 15.99 at 0.90).
        var (low, high) = StabilityAnalysis.Interval(1.0, 10);
        Check.Relative(Math.Sqrt(10 / MathNet.Numerics.Distributions.ChiSquared.InvCDF(10, 1 - 0.317 / 2)), low, 1e-12);
        Check.Relative(Math.Sqrt(10 / MathNet.Numerics.Distributions.ChiSquared.InvCDF(10, 0.317 / 2)), high, 1e-12);
        Assert.InRange(low, Math.Sqrt(10 / 15.99), Math.Sqrt(10 / 13.44));
        Assert.InRange(high, Math.Sqrt(10 / 6.737), Math.Sqrt(10 / 4.865));
    }

    [Theory]
    [InlineData(0)]
    [InlineData(-1)]
    [InlineData(double.NaN)]
    [InlineData(double.PositiveInfinity)]
    public void NonPositiveTau0IsRefused(double tau0)
    {
        var ex = Assert.Throws<MetrologyException>(() => StabilityAnalysis.Analyse(ReferenceData.Nbs140Frequency(), StabilityDataType.Frequency, tau0, All));
        Assert.Equal("tau0", ex.Parameter);
    }

    [Fact]
    public void BadRequestsAreRefused()
    {
        Assert.Equal("values", Assert.Throws<MetrologyException>(() => StabilityAnalysis.Analyse(Array.Empty<double>(), StabilityDataType.Frequency, 1, All)).Parameter);
        Assert.Equal("statistics", Assert.Throws<MetrologyException>(() => StabilityAnalysis.Analyse(new double[] { 1, 2, 3 }, StabilityDataType.Frequency, 1, [])).Parameter);
        Assert.Equal("averagingFactors", Assert.Throws<MetrologyException>(() => StabilityAnalysis.Analyse(new double[] { 1, 2, 3, 4 }, StabilityDataType.Frequency, 1, All, [0])).Parameter);
        var gaps = ReferenceData.Nbs140Frequency();
        gaps[4] = double.NaN;
        Assert.True(Assert.Throws<MetrologyException>(() => StabilityAnalysis.Analyse(gaps, StabilityDataType.Frequency, 1, [StabilityStatistic.Totdev])).NotComputable);
    }
}
