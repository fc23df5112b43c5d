using BenchmarkDotNet.Attributes;
using CalBudget.Core.Gum;
using CalBudget.Core.MonteCarlo;

namespace CalBudget.Benchmarks;

/// <summary>The parts of a Monte Carlo run, one core: 1e6 draws of each distribution, and the coverage intervals of 1e6 values.</summary>
[SimpleJob(warmupCount: 2, iterationCount: 10)]
public class SamplerBenchmarks
{
    private readonly double[] _out = new double[1_000_000];
    private double[] _values = [];

    [Params("normal", "rectangular", "triangular", "u-shaped", "student-t(9)", "student-t(1.5)")]
    public string Kind { get; set; } = "normal";

    private InputDistribution _d = InputDistribution.NormalFromStandard(1);

    [GlobalSetup]
    public void Setup()
    {
        _d = Kind switch
        {
            "normal" => InputDistribution.NormalFromStandard(1),
            "rectangular" => InputDistribution.Rectangular(1),
            "triangular" => InputDistribution.Triangular(1),
            "u-shaped" => InputDistribution.UShaped(1),
            "student-t(9)" => InputDistribution.StudentT(1, 9),
            _ => InputDistribution.StudentT(1, 1.5),
        };
        var rng = Xoshiro256.ForChunk(3, 0, 0);
        _values = new double[1_000_000];
        InputSampler.AddIndependent(ref rng, InputDistribution.NormalFromStandard(1), 1, _values);
    }

    [Benchmark(Description = "1e6 draws")]
    public double Draw()
    {
        var rng = Xoshiro256.ForChunk(1, 0, 0);
        InputSampler.AddIndependent(ref rng, _d, 1.0, _out);
        return _out[0];
    }

    [Benchmark(Description = "intervals of 1e6 values")]
    public Interval Intervals()
    {
        var copy = (double[])_values.Clone();
        return CoverageIntervals.Compute(copy, 0.9545).Symmetric;
    }
}
