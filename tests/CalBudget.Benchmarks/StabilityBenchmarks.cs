using BenchmarkDotNet.Attributes;
using CalBudget.Core.Stability;

namespace CalBudget.Benchmarks;

/// <summary>
/// All seven SP 1065 statistics at every octave averaging factor, with edf, intervals and noise identification, for
/// N = 1,048,576 fractional-frequency readings of white FM. Target: at most 150 ms on the 2-core reference machine.
/// </summary>
[MemoryDiagnoser]
[SimpleJob(warmupCount: 2, iterationCount: 10)]
public class StabilityBenchmarks
{
    private static readonly StabilityStatistic[] All = Enum.GetValues<StabilityStatistic>();
    private static readonly StabilityStatistic[] Four = [StabilityStatistic.Oadev, StabilityStatistic.Mdev, StabilityStatistic.Ohdev, StabilityStatistic.Totdev];
    private double[] _y = [];

    [Params(1 << 20)]
    public int N { get; set; }

    [GlobalSetup]
    public void Setup()
    {
        var random = new Random(1);
        _y = new double[N];
        for (int i = 0; i < N; i++)
        {
            _y[i] = 1e-11 * Math.Sqrt(-2 * Math.Log(1 - random.NextDouble())) * Math.Cos(2 * Math.PI * random.NextDouble());
        }
    }

    [Benchmark(Description = "all seven statistics, octave factors")]
    public StabilityResult AllSeven() => StabilityAnalysis.Analyse(_y, StabilityDataType.Frequency, 1.0, All);

    [Benchmark(Description = "oadev, mdev, ohdev, totdev, octave factors")]
    public StabilityResult FourOfThem() => StabilityAnalysis.Analyse(_y, StabilityDataType.Frequency, 1.0, Four);
}
