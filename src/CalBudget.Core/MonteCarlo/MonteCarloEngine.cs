using CalBudget.Core.Gum;

namespace CalBudget.Core.MonteCarlo;

/// <summary>
/// Propagation of distributions by Monte Carlo (JCGM 101:2008) for the additive model of an <see cref="UncertaintyBudget"/>.
/// </summary>
/// <remarks>
/// <para>Trials are made in chunks of <see cref="ChunkSize"/>, each with its own generator stream derived from the
/// seed and the chunk number, and chunks run in parallel; results depend on the seed only, not on the thread count.</para>
/// <para>Correlated inputs are sampled through a Gaussian copula: standard normal vectors with the stated correlation
/// matrix R are made as F e with F F^T = R (F from the eigendecomposition of R, so a singular R works too), and each
/// component is mapped to its input's distribution by F_i^-1(Phi(z_i)). For two normal inputs this gives exactly the
/// stated correlation (JCGM 101 6.4.8); for other pairs the copula parameter is the stated coefficient and the Pearson
/// correlation of the samples is close to it but smaller in magnitude (for two rectangular inputs 6/pi asin(r/2), at most
/// 0.018 below r).</para>
/// </remarks>
public static class MonteCarloEngine
{
    /// <summary>Trials per chunk of work: 32 KB of output, so the passes of every input over a chunk stay in the L1 cache (16,384 was 10 % slower).</summary>
    public const int ChunkSize = 4_096;

    /// <summary>The least number of trials for a coverage probability: J = ceil(100 / (1 - p)) (JCGM 101 7.9.4 b).</summary>
    public static long MinimumTrials(double coverageProbability) => (long)Math.Ceiling(100.0 / (1.0 - coverageProbability) - 1e-9);

    /// <summary>Runs the propagation; <paramref name="gum"/>, when given, is validated against the result (clause 8).</summary>
    public static MonteCarloResult Run(UncertaintyBudget budget, MonteCarloOptions options, GumResult? gum = null)
    {
        ArgumentNullException.ThrowIfNull(budget);
        ArgumentNullException.ThrowIfNull(options);
        if (options.SignificantDigits is < 1 or > 6)
        {
            throw new MetrologyException("monteCarlo.significantDigits", "Between 1 and 6 significant digits.");
        }

        var model = new SampledModel(budget);
        double p = budget.CoverageProbability;
        var parallel = new ParallelOptions { MaxDegreeOfParallelism = options.MaxDegreeOfParallelism ?? Environment.ProcessorCount, CancellationToken = options.Cancellation };
        MonteCarloResult result = options.Trials is { } fixedTrials
            ? RunFixed(model, p, fixedTrials, options, parallel)
            : RunAdaptive(model, p, options, parallel);
        return gum is null ? result : result with { Validation = Validate(gum, result, options.SignificantDigits) };
    }

    /// <summary>delta = 1/2 10^l where u = c 10^l and c has <paramref name="significantDigits"/> digits (JCGM 101 7.9.2).</summary>
    public static double NumericalTolerance(double u, int significantDigits)
    {
        if (!(u > 0) || !double.IsFinite(u))
        {
            return 0;
        }

        int l = (int)Math.Floor(Math.Log10(u)) - (significantDigits - 1);
        return 0.5 * Math.Pow(10, l);
    }

    /// <summary>JCGM 101 8.2: the GUM interval y +/- U_p is validated when both ends lie within delta of the Monte Carlo symmetric interval.</summary>
    public static GumValidation Validate(GumResult gum, MonteCarloResult mc, int significantDigits = 2)
    {
        ArgumentNullException.ThrowIfNull(gum);
        ArgumentNullException.ThrowIfNull(mc);
        double delta = NumericalTolerance(gum.CombinedStandardUncertainty, significantDigits);
        double dLow = Math.Abs(gum.Estimate - gum.ExpandedUncertainty - mc.CoverageInterval.Low);
        double dHigh = Math.Abs(gum.Estimate + gum.ExpandedUncertainty - mc.CoverageInterval.High);
        return new GumValidation(delta, dLow, dHigh, dLow <= delta && dHigh <= delta);
    }

    private static MonteCarloResult RunFixed(SampledModel model, double p, long trials, MonteCarloOptions options, ParallelOptions parallel)
    {
        long minimum = MinimumTrials(p);
        if (trials < minimum)
        {
            throw new MetrologyException("monteCarlo.trials",
                $"At least {minimum} trials are needed for a {p} coverage interval (JCGM 101 7.9.4: M >= 100 / (1 - p)).");
        }

        if (trials > options.MaxTrials || trials > Array.MaxLength)
        {
            throw new MetrologyException("monteCarlo.trials", $"At most {options.MaxTrials} trials are allowed here.") { NotComputable = true };
        }

        // The output buffer is rented: a new 8 MB array would be zeroed and page-faulted on every call.
        var rented = System.Buffers.ArrayPool<double>.Shared.Rent((int)trials);
        try
        {
            var values = rented.AsMemory(0, (int)trials);
            var moments = model.Fill(values, options.Seed, stream: 0, parallel);
            options.Cancellation.ThrowIfCancellationRequested(); // before the sort, which is not stopped part-way
            var (mean, sd) = Moments.Deviation(moments);
            var (symmetric, shortest) = CoverageIntervals.Compute(values, p, moments.Min, moments.Max, parallel);
            return new MonteCarloResult(trials, mean, sd, p, symmetric, shortest, options.Seed, Adaptive: false, Stabilized: true, null)
            {
                FractionWithin = FractionWithin(values.Span, options.CountWithin),
            };
        }
        finally
        {
            System.Buffers.ArrayPool<double>.Shared.Return(rented);
        }
    }

    // JCGM 101 7.9.4: sequences of M trials until twice the standard deviation of the mean of each of y, u(y), y_low and
    // y_high over the h sequences is within the numerical tolerance of u(y). Sequences are made in parallel waves and
    // checked in order, so the sequence count at which it stops depends on the seed only.
    private static MonteCarloResult RunAdaptive(SampledModel model, double p, MonteCarloOptions options, ParallelOptions parallel)
    {
        int batch = (int)Math.Max(MinimumTrials(p), 10_000);
        long maxBatches = options.MaxTrials / batch;
        if (maxBatches < 2)
        {
            throw new MetrologyException("monteCarlo.trials",
                $"The ceiling of {options.MaxTrials} trials leaves no room for the adaptive procedure (two sequences of {batch}).") { NotComputable = true };
        }

        int wave = Math.Max(2, 2 * parallel.MaxDegreeOfParallelism);
        var stats = new List<(double Mean, double Sd, double Low, double High)>();
        var moments = new List<Moments>();
        var all = new List<double[]>();
        bool stabilized = false;
        while (!stabilized && stats.Count < maxBatches)
        {
            int count = (int)Math.Min(wave, maxBatches - stats.Count);
            int first = stats.Count;
            var blocks = new double[count][];
            var waveStats = new (double, double, double, double)[count];
            var waveMoments = new Moments[count];
            Parallel.For(0, count, parallel, b =>
            {
                var v = new double[batch];
                waveMoments[b] = model.Fill(v, options.Seed, stream: first + b, new ParallelOptions { MaxDegreeOfParallelism = 1, CancellationToken = options.Cancellation });
                var (mean, sd) = Moments.Deviation(waveMoments[b]);
                var (sym, _) = CoverageIntervals.Compute(v, p, waveMoments[b].Min, waveMoments[b].Max, new ParallelOptions { MaxDegreeOfParallelism = 1, CancellationToken = options.Cancellation });
                blocks[b] = v;
                waveStats[b] = (mean, sd, sym.Low, sym.High);
            });

            for (int b = 0; b < count && !stabilized; b++)
            {
                stats.Add(waveStats[b]);
                moments.Add(waveMoments[b]);
                all.Add(blocks[b]);
                stabilized = stats.Count >= 2 && IsStable(stats, options.SignificantDigits);
            }
        }

        long total = (long)all.Count * batch;
        var values = new double[total];
        for (int b = 0; b < all.Count; b++)
        {
            all[b].CopyTo(values, (long)b * batch);
        }

        var overall = Moments.Combine(moments);
        var (m, u) = Moments.Deviation(overall);
        var (symmetric, shortest) = CoverageIntervals.Compute(values, p, overall.Min, overall.Max, parallel);
        return new MonteCarloResult(total, m, u, p, symmetric, shortest, options.Seed, Adaptive: true, stabilized, null)
        {
            FractionWithin = FractionWithin(values, options.CountWithin),
        };
    }

    private static double? FractionWithin(ReadOnlySpan<double> values, (double? Lower, double? Upper)? limits)
    {
        if (limits is not { } bounds)
        {
            return null;
        }

        double lo = bounds.Lower ?? double.NegativeInfinity, hi = bounds.Upper ?? double.PositiveInfinity;
        long within = 0;
        foreach (double v in values)
        {
            within += v >= lo && v <= hi ? 1 : 0;
        }

        return (double)within / values.Length;
    }

    private static bool IsStable(List<(double Mean, double Sd, double Low, double High)> stats, int digits)
    {
        int h = stats.Count;
        // 7.9.4 g): u(y) from all h M values; the pooled variance of equal-sized sequences is close enough for delta.
        double pooledU = Math.Sqrt(stats.Average(s => s.Sd * s.Sd) + Variance(stats.Select(s => s.Mean).ToArray(), population: true));
        double delta = NumericalTolerance(pooledU, digits);
        double Sem(Func<(double Mean, double Sd, double Low, double High), double> f) =>
            Math.Sqrt(Variance(stats.Select(f).ToArray(), population: false) / h);
        return 2 * Sem(s => s.Mean) <= delta && 2 * Sem(s => s.Sd) <= delta
            && 2 * Sem(s => s.Low) <= delta && 2 * Sem(s => s.High) <= delta;
    }

    private static double Variance(double[] x, bool population)
    {
        double mean = x.Average();
        double ss = 0;
        foreach (double v in x)
        {
            ss += (v - mean) * (v - mean);
        }

        return ss / (population ? x.Length : x.Length - 1);
    }

    internal static Span<double> ChunkOf(Memory<double> values, int chunk)
    {
        int start = chunk * ChunkSize;
        return values.Span.Slice(start, Math.Min(ChunkSize, values.Length - start));
    }

    /// <summary>The budget prepared for sampling: the constant part of y, the independent inputs and the copula.</summary>
    private sealed class SampledModel
    {
        private readonly double _offset;
        private readonly (InputDistribution Distribution, double Sensitivity)[] _independent;
        private readonly double[,]? _factor;
        private readonly CopulaMarginal?[] _marginals = [];
        private readonly double[] _normalScale = [];

        public SampledModel(UncertaintyBudget budget)
        {
            var inputs = budget.Contributions;
            _offset = inputs.Sum(c => c.Sensitivity * c.Estimate);
            var correlated = budget.Correlation.CorrelatedIndices;
            var set = new HashSet<int>(correlated);
            _independent = inputs.Where((_, i) => !set.Contains(i)).Select(c => (c.Distribution, c.Sensitivity)).ToArray();
            if (correlated.Count > 0)
            {
                _factor = budget.Correlation.Factor(correlated);
                _marginals = new CopulaMarginal?[correlated.Count];
                _normalScale = new double[correlated.Count];
                for (int k = 0; k < correlated.Count; k++)
                {
                    var c = inputs[correlated[k]];
                    if (c.Distribution.Kind == DistributionKind.Normal)
                    {
                        _normalScale[k] = c.Sensitivity * c.StandardUncertainty;
                    }
                    else
                    {
                        _marginals[k] = new CopulaMarginal(c.Distribution, c.Sensitivity);
                    }
                }
            }
        }

        // Fills the trials chunk by chunk and returns their moments, each chunk's taken while it is still in cache and
        // combined in chunk order, so the result does not depend on thread scheduling.
        public Moments Fill(Memory<double> values, ulong seed, long stream, ParallelOptions parallel)
        {
            int chunks = (values.Length + ChunkSize - 1) / ChunkSize;
            var parts = new Moments[chunks];
            Parallel.For(0, chunks, parallel, c =>
            {
                var rng = Xoshiro256.ForChunk(seed, stream, c);
                var span = ChunkOf(values, c);
                span.Fill(_offset);
                foreach (var (distribution, sensitivity) in _independent)
                {
                    InputSampler.AddIndependent(ref rng, distribution, sensitivity, span);
                }

                if (_factor is not null)
                {
                    AddCorrelated(ref rng, span);
                }

                parts[c] = Moments.Of(span);
            });
            return Moments.Combine(parts);
        }

        private void AddCorrelated(ref Xoshiro256 rng, Span<double> output)
        {
            int k = _marginals.Length;
            Span<double> e = stackalloc double[k];
            for (int j = 0; j < output.Length; j++)
            {
                for (int a = 0; a < k; a++)
                {
                    e[a] = Ziggurat.Next(ref rng);
                }

                double sum = 0;
                for (int a = 0; a < k; a++)
                {
                    double z = 0;
                    for (int b = 0; b < k; b++)
                    {
                        z += _factor![a, b] * e[b];
                    }

                    sum += _marginals[a] is { } marginal ? marginal.Map(z) : _normalScale[a] * z;
                }

                output[j] += sum;
            }
        }
    }
}

/// <summary>Count, mean and sum of squared deviations of a set of values; parts combine exactly (Chan, Golub and LeVeque, 1979).</summary>
internal readonly record struct Moments(long Count, double Mean, double SquaredDeviations, double Min, double Max)
{
    public static Moments Of(ReadOnlySpan<double> values)
    {
        double sum = 0;
        double min = double.PositiveInfinity, max = double.NegativeInfinity;
        foreach (double v in values)
        {
            sum += v;
            // plain comparisons: the values are finite, so Math.Min's NaN and signed-zero care is not needed
            min = v < min ? v : min;
            max = v > max ? v : max;
        }

        double mean = sum / values.Length;
        double ss = 0;
        foreach (double v in values)
        {
            double d = v - mean;
            ss += d * d;
        }

        return new Moments(values.Length, mean, ss, min, max);
    }

    public static Moments Combine(IReadOnlyList<Moments> parts)
    {
        var total = parts[0];
        for (int i = 1; i < parts.Count; i++)
        {
            var b = parts[i];
            long n = total.Count + b.Count;
            double delta = b.Mean - total.Mean;
            total = new Moments(n, total.Mean + delta * b.Count / n,
                total.SquaredDeviations + b.SquaredDeviations + delta * delta * ((double)total.Count * b.Count / n),
                Math.Min(total.Min, b.Min), Math.Max(total.Max, b.Max));
        }

        return total;
    }

    /// <summary>The mean and the sample standard deviation (divisor n - 1).</summary>
    public static (double Mean, double Sd) Deviation(Moments m) => (m.Mean, Math.Sqrt(m.SquaredDeviations / (m.Count - 1)));
}
