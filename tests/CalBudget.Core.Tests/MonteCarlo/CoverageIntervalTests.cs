using CalBudget.Core.MonteCarlo;

namespace CalBudget.Core.Tests.MonteCarlo;

public class CoverageIntervalTests
{
    // The textbook form of JCGM 101:2008 7.7: sort everything, then read the order statistics.
    private static (Interval, Interval) Reference(double[] values, double p)
    {
        var y = (double[])values.Clone();
        Array.Sort(y);
        int m = y.Length;
        int q = (int)CoverageIntervals.CoveredCount(m, p);
        int r = (m - q) % 2 == 0 ? (m - q) / 2 : (m - q + 1) / 2;
        var sym = new Interval(y[r - 1], y[r + q - 1]);
        int best = 1;
        for (int s = 1; s <= m - q; s++)
        {
            if (y[s + q - 1] - y[s - 1] < y[best + q - 1] - y[best - 1])
            {
                best = s;
            }
        }

        return (sym, new Interval(y[best - 1], y[best + q - 1]));
    }

    [Theory]
    [InlineData(10_000, 0.95, 1)]
    [InlineData(10_001, 0.9545, 2)]
    [InlineData(3_333, 0.5, 3)]
    [InlineData(50_000, 0.99, 4)]
    [InlineData(2_500, 0.9973, 5)]
    public void SelectionGivesTheSameIntervalsAsAFullSort(int m, double p, int seed)
    {
        var random = new Random(seed);
        // a skewed sample with ties, to exercise the partition
        var v = Enumerable.Range(0, m).Select(_ => Math.Round(Math.Exp(random.NextDouble() * 3) * 100) / 100).ToArray();
        var expected = Reference(v, p);
        Assert.Equal(expected, CoverageIntervals.Compute(v, p));
    }

    [Fact]
    public void CoveredCountFollowsJcgm101Rounding()
    {
        Assert.Equal(9500, CoverageIntervals.CoveredCount(10_000, 0.95));   // pM whole
        Assert.Equal(9546, CoverageIntervals.CoveredCount(10_001, 0.9545)); // floor(9545.95 + 0.5)
    }

    [Fact]
    public void AFarOutlierFallsBackToSortingAndStaysExact()
    {
        var random = new Random(11);
        var v = Enumerable.Range(0, 20_000).Select(_ => random.NextDouble()).ToArray();
        v[123] = 1e300; // every other value lands in the histogram's first bin
        Assert.Equal(Reference(v, 0.95), CoverageIntervals.Compute(v, 0.95));
    }

    [Fact]
    public void IdenticalValuesGiveAZeroLengthInterval()
    {
        var v = Enumerable.Repeat(4.25, 5_000).ToArray();
        var (sym, shortest) = CoverageIntervals.Compute(v, 0.95);
        Assert.Equal(new Interval(4.25, 4.25), sym);
        Assert.Equal(0, shortest.Length);
    }

    [Fact]
    public void TheInputIsNotReordered()
    {
        var random = new Random(5);
        var v = Enumerable.Range(0, 30_000).Select(_ => random.NextDouble()).ToArray();
        var before = (double[])v.Clone();
        CoverageIntervals.Compute(v, 0.9);
        Assert.Equal(before, v);
    }
}

public class RadixSortTests
{
    [Theory]
    [InlineData(300, 1)]
    [InlineData(10_000, 2)]
    [InlineData(65_537, 3)]
    public void SortsLikeArraySortAcrossSignsMagnitudesAndTies(int n, int seed)
    {
        var random = new Random(seed);
        var v = Enumerable.Range(0, n).Select(i => (i % 7) switch
        {
            0 => -random.NextDouble() * 1e-12,
            1 => random.NextDouble() * 1e9,
            2 => -random.NextDouble() * 1e200,
            3 => 0.0,
            4 => -3.5,
            _ => (random.NextDouble() - 0.5) * 2,
        }).ToArray();
        var expected = (double[])v.Clone();
        Array.Sort(expected);
        CoverageIntervals.RadixSort(v);
        Assert.Equal(expected, v);
    }
}
