using BenchmarkDotNet.Attributes;
using CalBudget.Core.Gum;
using CalBudget.Core.MonteCarlo;

namespace CalBudget.Benchmarks;

/// <summary>
/// Monte Carlo at M = 1e6 for a 10-input budget mixing all five distributions (two of each), coverage intervals and the
/// GUM validation included, on every core. Target: at most 60 ms on the 2-core reference machine.
/// </summary>
[MemoryDiagnoser]
[SimpleJob(warmupCount: 3, iterationCount: 15)]
public class MonteCarloBenchmarks
{
    private UncertaintyBudget _budget = null!;
    private UncertaintyBudget _correlated = null!;
    private GumResult _gum = null!;

    [GlobalSetup]
    public void Setup()
    {
        Contribution[] inputs =
        [
            Contribution.Create("reference", InputDistribution.NormalFromExpanded(2e-12, 2)),
            Contribution.Create("reference drift", InputDistribution.NormalFromStandard(4e-13)),
            Contribution.Create("resolution", InputDistribution.Rectangular(5e-12)),
            Contribution.Create("temperature", InputDistribution.Rectangular(1e-11)),
            Contribution.Create("aging", InputDistribution.Triangular(2e-11)),
            Contribution.Create("supply", InputDistribution.Triangular(3e-12)),
            Contribution.Create("orientation", InputDistribution.UShaped(4e-11)),
            Contribution.Create("retrace", InputDistribution.UShaped(8e-12)),
            Contribution.Create("repeatability", InputDistribution.StudentT(3e-12, 9), type: EvaluationType.A),
            Contribution.Create("interpolator", InputDistribution.StudentT(1e-12, 4), type: EvaluationType.A),
        ];
        _budget = UncertaintyBudget.Create(inputs);
        _correlated = UncertaintyBudget.Create(inputs,
            [Correlation.Between("reference", "reference drift", 0.5), Correlation.Between("temperature", "aging", 0.3)]);
        _gum = _budget.Evaluate();
    }

    [Benchmark(Description = "MC 1e6 trials, 10 mixed inputs, intervals + validation")]
    public MonteCarloResult TenMixedInputs() =>
        MonteCarloEngine.Run(_budget, new MonteCarloOptions { Trials = 1_000_000, Seed = 1 }, _gum);

    [Benchmark(Description = "MC 1e6 trials, 10 mixed inputs, one core")]
    public MonteCarloResult TenMixedInputsOneCore() =>
        MonteCarloEngine.Run(_budget, new MonteCarloOptions { Trials = 1_000_000, Seed = 1, MaxDegreeOfParallelism = 1 }, _gum);

    [Benchmark(Description = "MC 1e6 trials, 10 inputs, 4 of them correlated")]
    public MonteCarloResult TenInputsFourCorrelated() =>
        MonteCarloEngine.Run(_correlated, new MonteCarloOptions { Trials = 1_000_000, Seed = 1 });

    [Benchmark(Description = "GUM evaluation, 10 inputs")]
    public GumResult Gum() => _budget.Evaluate();
}
