using System.Collections.Concurrent;
using MathNet.Numerics.Distributions;

namespace CalBudget.Core.Stability;

/// <summary>One point of a stability curve.</summary>
/// <param name="AveragingFactor">m.</param>
/// <param name="Tau">m tau0, seconds.</param>
/// <param name="Deviation">The deviation (square root of the variance); TDEV in seconds, the others dimensionless.</param>
/// <param name="Count">Number of terms averaged.</param>
/// <param name="DegreesOfFreedom">Equivalent degrees of freedom for the noise type used.</param>
/// <param name="Interval">68.3 % chi-squared confidence interval of the deviation (SP 1065 eq. 45).</param>
/// <param name="Alpha">The noise exponent the edf assumed.</param>
public sealed record StabilityPoint(int AveragingFactor, double Tau, double Deviation, int Count, double DegreesOfFreedom,
    (double Low, double High) Interval, int Alpha);

/// <summary>The identified noise at one averaging time.</summary>
/// <param name="AveragingFactor">m.</param>
/// <param name="Tau">m tau0.</param>
/// <param name="Alpha">The exponent of S_y ~ f^alpha, or null when too few points remain to identify it.</param>
public sealed record NoisePoint(int AveragingFactor, double Tau, int? Alpha)
{
    /// <summary>The noise name, or "not identified".</summary>
    public string Type => Alpha is int a ? NoiseType.Name(a) : "not identified";
}

/// <summary>The requested statistics, each a curve over the averaging factors it could compute, and the noise per factor.</summary>
/// <param name="Results">By statistic.</param>
/// <param name="Noise">By averaging factor, ascending.</param>
public sealed record StabilityResult(IReadOnlyDictionary<StabilityStatistic, IReadOnlyList<StabilityPoint>> Results, IReadOnlyList<NoisePoint> Noise);

/// <summary>
/// Frequency-stability analysis (NIST SP 1065): the statistics at the requested averaging factors (or octaves 1, 2, 4 ...
/// up to each statistic's largest), each with its term count, equivalent degrees of freedom for the noise identified at
/// that factor, and 68.3 % confidence interval. The averaging factors run in parallel.
/// </summary>
public static class StabilityAnalysis
{
    /// <summary>Probability outside the 68.3 % interval, split between the two tails (SP 1065 eq. 45, p = 0.317).</summary>
    private const double OutsideProbability = 0.317;

    /// <summary>
    /// Analyses <paramref name="readings"/>. NaN readings are gaps: a term whose span holds one is left out (TOTDEV, whose
    /// reflected extension has no meaning across gaps, refuses them). <paramref name="cancellationToken"/> stops the work
    /// between averaging factors with an <see cref="OperationCanceledException"/>.
    /// </summary>
    public static StabilityResult Analyse(ReadOnlyMemory<double> readings, StabilityDataType type, double tau0,
        IReadOnlyCollection<StabilityStatistic> statistics, IReadOnlyCollection<int>? averagingFactors = null,
        CancellationToken cancellationToken = default)
    {
        var values = readings.Span;
        ArgumentNullException.ThrowIfNull(statistics);
        if (!double.IsFinite(tau0) || tau0 <= 0)
        {
            throw new MetrologyException("tau0", "tau0 must be a finite number of seconds > 0.");
        }

        if (statistics.Count == 0)
        {
            throw new MetrologyException("statistics", "Name at least one statistic.");
        }

        foreach (double v in values)
        {
            if (double.IsInfinity(v))
            {
                throw new MetrologyException("values", "Readings must be finite (NaN marks a gap).");
            }
        }

        using var series = PhaseSeries.From(values, type, tau0);
        if (series.Length - series.GapCount < 3)
        {
            throw new MetrologyException("values", "At least three phase points (two frequency readings) are needed.") { NotComputable = true };
        }

        if (series.GapCount > 0 && statistics.Contains(StabilityStatistic.Totdev))
        {
            throw new MetrologyException("statistics", "TOTDEV needs data without gaps: its reflected extension is not defined across a gap.") { NotComputable = true };
        }

        if (averagingFactors is not null && averagingFactors.Any(m => m < 1))
        {
            throw new MetrologyException("averagingFactors", "Averaging factors are whole numbers >= 1.");
        }

        var jobs = new List<(StabilityStatistic Statistic, int M)>();
        foreach (var statistic in statistics.Distinct())
        {
            int max = Deviations.MaxAveragingFactor(statistic, series.Length);
            IEnumerable<int> factors = averagingFactors?.Distinct().Order() ?? Octaves(max);
            jobs.AddRange(factors.Where(m => m <= max).Select(m => (statistic, m)));
        }

        bool hadamard = statistics.Contains(StabilityStatistic.Hdev) || statistics.Contains(StabilityStatistic.Ohdev);
        var identification = new NoiseIdentification(series, readings);
        var noise = jobs.Select(j => j.M).Distinct().Order().AsParallel().AsOrdered().WithCancellation(cancellationToken)
            .WithDegreeOfParallelism(Environment.ProcessorCount)
            .Select(m => new NoisePoint(m, m * tau0, identification.Identify(m, hadamard ? 3 : 2)))
            .ToArray();
        var alphaAt = FillUnidentified(noise);

        // One piece of work per averaging factor, shared by both cores, the smallest factor (the most terms) first: without
        // gaps one pass gives the sums of every overlapping statistic at that factor; each other variance is computed once
        // (TDEV is MDEV rescaled); then each point's edf and interval.
        bool shared = series.GapCount == 0;
        var byFactor = jobs.GroupBy(j => j.M).Select(g => (M: g.Key, Jobs: g.ToArray())).OrderBy(g => g.M).ToArray();
        var points = new ConcurrentBag<(StabilityStatistic Statistic, StabilityPoint Point)>();
        // one worker per core, however many threads the pool holds ready
        var parallel = new ParallelOptions { CancellationToken = cancellationToken, MaxDegreeOfParallelism = Environment.ProcessorCount };
        Parallel.ForEach(Partitioner.Create(byFactor, EnumerablePartitionerOptions.NoBuffering), parallel, group =>
        {
            int m = group.M;
            DifferenceSums? sums = shared && group.Jobs.Any(j => Deviations.UsesSums(j.Statistic)) ? Deviations.Sums(series.X, m) : null;
            var estimates = new Dictionary<StabilityStatistic, VarianceEstimate>();
            foreach (var job in group.Jobs)
            {
                var kind = Kind(job.Statistic);
                if (!estimates.TryGetValue(kind, out var estimate))
                {
                    estimates[kind] = estimate = Deviations.Variance(series, kind, m, sums);
                }

                if (estimate.Terms == 0 || !(estimate.Variance >= 0))
                {
                    continue;
                }

                double tau = m * tau0;
                double variance = job.Statistic == StabilityStatistic.Tdev ? estimate.Variance * tau * tau / 3 : estimate.Variance;
                int alpha = alphaAt[m];
                double edf = EquivalentDegreesOfFreedom.Compute(job.Statistic, alpha, m, estimate.Terms, series.Length);
                points.Add((job.Statistic, new StabilityPoint(m, tau, Math.Sqrt(variance), estimate.Terms, edf, Interval(Math.Sqrt(variance), edf), alpha)));
            }
        });

        var results = statistics.Distinct().ToDictionary(
            s => s,
            s => (IReadOnlyList<StabilityPoint>)points.Where(p => p.Statistic == s).Select(p => p.Point).OrderBy(p => p.AveragingFactor).ToArray());
        return new StabilityResult(results, noise);
    }

    // The variance a statistic is computed from: TDEV rescales the modified variance.
    private static StabilityStatistic Kind(StabilityStatistic statistic) =>
        statistic == StabilityStatistic.Tdev ? StabilityStatistic.Mdev : statistic;

    /// <summary>The octave factors 1, 2, 4 ... up to <paramref name="max"/>.</summary>
    public static IEnumerable<int> Octaves(int max)
    {
        for (long m = 1; m <= max; m *= 2)
        {
            yield return (int)m;
        }
    }

    /// <summary>The 68.3 % chi-squared interval of a deviation with <paramref name="edf"/> degrees of freedom (SP 1065 eq. 45).</summary>
    public static (double Low, double High) Interval(double deviation, double edf)
    {
        if (!(edf > 0) || !double.IsFinite(edf))
        {
            return (double.NaN, double.NaN);
        }

        double upperQuantile = ChiSquared.InvCDF(edf, 1 - OutsideProbability / 2);
        double lowerQuantile = ChiSquared.InvCDF(edf, OutsideProbability / 2);
        return (deviation * Math.Sqrt(edf / upperQuantile), deviation * Math.Sqrt(edf / lowerQuantile));
    }

    // Where the noise could not be identified (too few points at long tau), the edf assumes the noise identified at the
    // largest factor where it could be, or white FM when it could be nowhere.
    private static Dictionary<int, int> FillUnidentified(IReadOnlyList<NoisePoint> noise)
    {
        var map = new Dictionary<int, int>();
        int last = 0;
        foreach (var point in noise)
        {
            if (point.Alpha is int a)
            {
                last = a;
            }

            map[point.AveragingFactor] = point.Alpha ?? last;
        }

        return map;
    }
}
