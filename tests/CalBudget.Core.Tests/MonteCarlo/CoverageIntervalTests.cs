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
        Assert.Equal(expected, CoverageIntervals.Compute((double[])v.Clone(), p));
    }

    [Fact]
    public void CoveredCountFollowsJcgm101Rounding()
    {
        Assert.Equal(9500, CoverageIntervals.CoveredCount(10_000, 0.95));   // pM whole
        Assert.Equal(9546, CoverageIntervals.CoveredCount(10_001, 0.9545)); // floor(9545.95 + 0.5)
    }

    [Fact]
    public void SelectPutsTheKthValueInPlace()
    {
        var random = new Random(7);
        for (int trial = 0; trial < 50; trial++)
        {
            var v = Enumerable.Range(0, random.Next(1, 500)).Select(_ => (double)random.Next(0, 50)).ToArray();
            int k = random.Next(v.Length);
            var sorted = v.Order().ToArray();
            CoverageIntervals.Select(v, k);
            Assert.Equal(sorted[k], v[k]);
            Assert.All(v[..k], x => Assert.True(x <= v[k]));
            Assert.All(v[(k + 1)..], x => Assert.True(x >= v[k]));
        }
    }
}
