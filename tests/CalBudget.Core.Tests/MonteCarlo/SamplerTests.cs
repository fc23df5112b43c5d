using CalBudget.Core.Gum;
using CalBudget.Core.MonteCarlo;
using MathNet.Numerics.Distributions;

namespace CalBudget.Core.Tests.MonteCarlo;

public class SamplerTests
{
    private const int N = 1_000_000;

    private static double[] Draw(InputDistribution d, ulong seed = 11)
    {
        var rng = Xoshiro256.ForChunk(seed, 0, 0);
        var v = new double[N];
        InputSampler.AddIndependent(ref rng, d, 1.0, v);
        Array.Sort(v);
        return v;
    }

    private static double Sd(double[] v)
    {
        double m = v.Average();
        return Math.Sqrt(v.Sum(x => (x - m) * (x - m)) / (v.Length - 1));
    }

    // Kolmogorov-Smirnov distance against the exact CDF; 1.95 / sqrt(N) is the 0.1 % critical value (Smirnov's
    // asymptotic distribution, a textbook table).
    private static void FollowsCdf(double[] sorted, Func<double, double> cdf)
    {
        double d = 0;
        for (int i = 0; i < sorted.Length; i++)
        {
            double f = cdf(sorted[i]);
            d = Math.Max(d, Math.Max(Math.Abs(f - (double)i / sorted.Length), Math.Abs(f - (double)(i + 1) / sorted.Length)));
        }

        Assert.True(d < 1.95 / Math.Sqrt(sorted.Length), $"KS distance {d}");
    }

    [Fact]
    public void ZigguratNormalFollowsTheNormalDistribution()
    {
        var v = Draw(InputDistribution.NormalFromStandard(1));
        FollowsCdf(v, x => Normal.CDF(0, 1, x));
        Check.Absolute(1.0, Sd(v), 0.003, "sd");
        // the tail beyond the ziggurat's base R = 3.4426 is sampled separately: P(|Z| > R) = 5.76e-4
        double tail = v.Count(x => Math.Abs(x) > 3.442619855899) / (double)N;
        Check.Absolute(5.76e-4, tail, 1.0e-4, "tail share");
    }

    [Fact]
    public void RectangularFollowsItsCdf() =>
        FollowsCdf(Draw(InputDistribution.Rectangular(2)), x => Math.Clamp((x + 2) / 4, 0, 1));

    [Fact]
    public void TriangularFollowsItsCdf() =>
        FollowsCdf(Draw(InputDistribution.Triangular(1)), x => x < 0 ? 0.5 * (1 + x) * (1 + x) : 1 - 0.5 * (1 - x) * (1 - x));

    [Fact]
    public void UShapedFollowsTheArcsineCdf() =>
        FollowsCdf(Draw(InputDistribution.UShaped(1)), x => 0.5 + Math.Asin(Math.Clamp(x, -1, 1)) / Math.PI);

    [Theory]
    [InlineData(1.0)]
    [InlineData(3.0)]
    [InlineData(9.5)]
    public void StudentTFollowsItsCdf(double nu) =>
        FollowsCdf(Draw(InputDistribution.StudentT(1, nu)), x => StudentT.CDF(0, 1, nu, x));

    [Fact]
    public void StandardDeviationsMatchTheStatedUncertainties()
    {
        foreach (var d in new[] { InputDistribution.Rectangular(3), InputDistribution.Triangular(3), InputDistribution.UShaped(3) })
        {
            Check.Relative(d.StandardUncertainty, Sd(Draw(d)), 0.005, d.Kind.ToString());
        }
    }

    [Theory]
    [InlineData("rectangular")]
    [InlineData("triangular")]
    [InlineData("u-shaped")]
    [InlineData("student-t")]
    public void CopulaMarginalInvertsTheDistributionAtNormalQuantiles(string kind)
    {
        InputDistribution d = kind switch
        {
            "rectangular" => InputDistribution.Rectangular(1),
            "triangular" => InputDistribution.Triangular(1),
            "u-shaped" => InputDistribution.UShaped(1),
            _ => InputDistribution.StudentT(1, 4),
        };
        Func<double, double> cdf = kind switch
        {
            "rectangular" => x => (x + 1) / 2,
            "triangular" => x => x < 0 ? 0.5 * (1 + x) * (1 + x) : 1 - 0.5 * (1 - x) * (1 - x),
            "u-shaped" => x => 0.5 + Math.Asin(x) / Math.PI,
            _ => x => StudentT.CDF(0, 1, 4, x),
        };
        var marginal = new CopulaMarginal(d, 1.0);
        foreach (double z in new[] { -3.1, -1.0, -0.2, 0.0, 0.37, 1.5, 2.9 })
        {
            Check.Absolute(Normal.CDF(0, 1, z), cdf(marginal.Map(z)), 2e-5, $"{kind} at z = {z}");
        }
    }

    [Fact]
    public void StreamsForDifferentChunksDiffer()
    {
        var a = Xoshiro256.ForChunk(1, 0, 0);
        var b = Xoshiro256.ForChunk(1, 0, 1);
        var c = Xoshiro256.ForChunk(1, 1, 0);
        ulong x = a.NextUInt64(), y = b.NextUInt64(), z = c.NextUInt64();
        Assert.NotEqual(x, y);
        Assert.NotEqual(x, z);
        Assert.NotEqual(y, z);
    }
}
