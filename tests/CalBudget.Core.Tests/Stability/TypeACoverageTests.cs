using CalBudget.Core.Gum;
using CalBudget.Core.Stability;

namespace CalBudget.Core.Tests.Stability;

/// <summary>
/// The Type A estimator tried on simulated runs of known noise (Kasdin and Walter's discrete power-law noise, fixed seeds):
/// the fraction of runs whose stated 95 % interval (t with the stated nu) holds the true mean, and the fraction whose u_A
/// is below half the true rms of the mean. Targets (the issue's): coverage 0.93-0.97 for white FM, at least 0.90 for
/// flicker and random-walk FM, at most 5 % of runs below half the true rms.
/// </summary>
public class TypeACoverageTests(Xunit.Abstractions.ITestOutputHelper output)
{
    public const int Runs = 1000;
    public const int Readings = 1000;

    public sealed record Coverage(int Alpha, int Runs, double Covered, double BelowHalf, double MedianRatio, double MeanDegreesOfFreedom);

    /// <summary>Simulates <paramref name="runs"/> runs of <paramref name="readings"/> readings (also used by the benchmark command for the README figures).</summary>
    public static Coverage Simulate(int alpha, int runs, int readings, int seed)
    {
        var noise = new PowerLawNoise(alpha, readings, seed);
        double trueRms = noise.TrueRmsOfMean();
        int covered = 0, belowHalf = 0;
        var ratios = new double[runs];
        double nuSum = 0;
        for (int r = 0; r < runs; r++)
        {
            var y = noise.Next();
            var a = TimebaseTypeA.Evaluate(y, 1);
            double k = CoverageFactor.TwoSided(0.95, a.DegreesOfFreedom);
            if (Math.Abs(a.Mean) <= k * a.StandardUncertainty)
            {
                covered++;
            }

            if (a.StandardUncertainty < trueRms / 2)
            {
                belowHalf++;
            }

            ratios[r] = a.StandardUncertainty / trueRms;
            nuSum += a.DegreesOfFreedom;
        }

        Array.Sort(ratios);
        return new Coverage(alpha, runs, covered / (double)runs, belowHalf / (double)runs, ratios[runs / 2], nuSum / runs);
    }

    [Theory]
    [InlineData(0, 0.93, 0.97)]
    [InlineData(-1, 0.90, 1.0)]
    [InlineData(-2, 0.90, 1.0)]
    public void StatedIntervalsHoldTheTrueMeanForEachNoiseKind(int alpha, double low, double high)
    {
        var c = Simulate(alpha, Runs, Readings, 20261202 + alpha);
        output.WriteLine(c.ToString()); // the README's figures: dotnet test tests/CalBudget.Core.Tests --filter TypeACoverage --logger "console;verbosity=detailed"
        Assert.InRange(c.Covered, low, high);
        Assert.InRange(c.BelowHalf, 0, 0.05);
    }

    /// <summary>
    /// White FM that dominates at short averaging times with a random walk (steps of <paramref name="walk"/> of the white
    /// deviation) that takes over near the run's length: the lag-1 method sees white noise at every factor it can use.
    /// </summary>
    public static Coverage SimulateMixed(int runs, int readings, double walk, int seed)
    {
        var white = new PowerLawNoise(0, readings, seed);
        var steps = new PowerLawNoise(-2, readings, seed + 1);
        double w = white.TrueRmsOfMean(), r = walk * steps.TrueRmsOfMean();
        double trueRms = Math.Sqrt(w * w + r * r); // independent parts: variances add
        int covered = 0, belowHalf = 0;
        var ratios = new double[runs];
        double nuSum = 0;
        for (int i = 0; i < runs; i++)
        {
            var a1 = white.Next();
            var a2 = steps.Next();
            var y = a1.Select((v, k) => v + walk * a2[k]).ToArray();
            var a = TimebaseTypeA.Evaluate(y, 1);
            covered += Math.Abs(a.Mean) <= CoverageFactor.TwoSided(0.95, a.DegreesOfFreedom) * a.StandardUncertainty ? 1 : 0;
            belowHalf += a.StandardUncertainty < trueRms / 2 ? 1 : 0;
            ratios[i] = a.StandardUncertainty / trueRms;
            nuSum += a.DegreesOfFreedom;
        }

        Array.Sort(ratios);
        return new Coverage(99, runs, covered / (double)runs, belowHalf / (double)runs, ratios[runs / 2], nuSum / runs);
    }

    [Fact]
    public void ARandomWalkThatTakesOverNearTheRunsLengthIsNotMissed()
    {
        // 600 readings, random-walk steps of 0.05 of the white deviation: white dominates up to tau of about 35 s, the walk
        // dominates the mean of the run 17 to 1 (invented proportions of the demo data's kind). The walk shows only in the
        // Allan variances of the longest octaves, on few degrees of freedom, so this is the estimator's hardest case: the
        // figures (README) are a known limit, held here so that they do not get worse. Without the long-tau check and the
        // conservative law, coverage was 0.60 with 74 % of runs below half the true rms.
        var c = SimulateMixed(Runs, 600, 0.05, 20261203);
        output.WriteLine("white FM + random-walk FM: " + c);
        Assert.InRange(c.Covered, 0.85, 1.0);
        Assert.InRange(c.BelowHalf, 0, 0.15);
    }

    [Fact]
    public void TheTrueRmsOfTheMeanMatchesTheClosedForms()
    {
        // white FM: 1/sqrt(n); random walk: sqrt((n + 1)(2n + 1) / (6n)) (sum of squares, derived by hand)
        Check.Relative(1 / Math.Sqrt(Readings), new PowerLawNoise(0, Readings, 1).TrueRmsOfMean(), 1e-12);
        Check.Relative(Math.Sqrt((Readings + 1.0) * (2 * Readings + 1) / (6.0 * Readings)), new PowerLawNoise(-2, Readings, 1).TrueRmsOfMean(), 1e-12);
        // flicker FM: tends to sqrt(2/pi) (H_i ~ 2 sqrt(i/pi)); at n = 1000 within 1 %
        Check.Relative(Math.Sqrt(2 / Math.PI), new PowerLawNoise(-1, Readings, 1).TrueRmsOfMean(), 0.01);
    }

    [Fact]
    public void CorrelatedNoiseNeverRestsOnOneOrTwoTerms()
    {
        var noise = new PowerLawNoise(-2, Readings, 7);
        for (int r = 0; r < 20; r++)
        {
            var a = TimebaseTypeA.Evaluate(noise.Next(), 1);
            Assert.Equal(TypeAEstimator.AllanDeviation, a.Estimator);
            Assert.True(a.DegreesOfFreedom >= TimebaseTypeA.MinimumDegreesOfFreedom, $"nu = {a.DegreesOfFreedom}");
            Assert.True(a.AveragingFactor < Readings / 4);
        }
    }
}
