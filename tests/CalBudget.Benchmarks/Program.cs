using System.Diagnostics;
using BenchmarkDotNet.Running;
using CalBudget.Core.Stability;

// dotnet run -c Release --project tests/CalBudget.Benchmarks -- --filter '*'
// dotnet run -c Release --project tests/CalBudget.Benchmarks -- stability-memory 10000000
if (args is ["stability-memory", var count])
{
    // All seven statistics at octave factors on N white-FM readings; prints the time and the process's peak working set.
    int n = int.Parse(count, System.Globalization.CultureInfo.InvariantCulture);
    var random = new Random(1);
    var y = new double[n];
    for (int i = 0; i < n; i++)
    {
        y[i] = 1e-11 * Math.Sqrt(-2 * Math.Log(1 - random.NextDouble())) * Math.Cos(2 * Math.PI * random.NextDouble());
    }

    var watch = Stopwatch.StartNew();
    var result = StabilityAnalysis.Analyse(y, StabilityDataType.Frequency, 1.0, Enum.GetValues<StabilityStatistic>());
    Console.WriteLine($"N = {n}: {watch.Elapsed.TotalSeconds:F2} s, {result.Results.Values.Sum(v => v.Count)} points, " +
        $"peak working set {Process.GetCurrentProcess().PeakWorkingSet64 / 1048576} MiB (the readings alone {n * 8L / 1048576} MiB)");
    return;
}

BenchmarkSwitcher.FromAssembly(typeof(Program).Assembly).Run(args);
