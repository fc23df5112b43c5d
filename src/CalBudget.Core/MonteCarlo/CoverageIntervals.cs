namespace CalBudget.Core.MonteCarlo;

/// <summary>A coverage interval [Low, High].</summary>
/// <param name="Low">Lower end.</param>
/// <param name="High">Upper end.</param>
public readonly record struct Interval(double Low, double High)
{
    /// <summary>High - Low.</summary>
    public double Length => High - Low;
}

/// <summary>
/// Coverage intervals from M output values (JCGM 101:2008 7.7). Only the order statistics that an interval can use are
/// put in order: with q = pM (rounded as in 7.7.2) and L = M - q, the L smallest and the L largest values. A histogram of
/// the values finds the bins that hold those tails; only the values in them are copied out and sorted, the two tails in
/// parallel, so the cost is two passes over M plus the sorting of about 2L values. The input is not reordered.
/// </summary>
internal static class CoverageIntervals
{
    private const int Bins = 1 << 14;

    /// <summary>q of JCGM 101 7.7.2: pM when that is a whole number, else floor(pM + 1/2).</summary>
    public static long CoveredCount(long m, double p)
    {
        double pm = p * m;
        return pm == Math.Floor(pm) ? (long)pm : (long)Math.Floor(pm + 0.5);
    }

    /// <summary>The probabilistically symmetric (7.7.2) and shortest (7.7.3) 100p % intervals of <paramref name="values"/>.</summary>
    public static (Interval Symmetric, Interval Shortest) Compute(double[] values, double p)
    {
        ArgumentNullException.ThrowIfNull(values);
        double min = double.PositiveInfinity, max = double.NegativeInfinity;
        foreach (double v in values)
        {
            min = v < min ? v : min;
            max = v > max ? v : max;
        }

        return Compute(values.AsMemory(), p, min, max, new ParallelOptions());
    }

    /// <summary>As <see cref="Compute(double[], double)"/>, with the values' extremes already known.</summary>
    public static (Interval Symmetric, Interval Shortest) Compute(ReadOnlyMemory<double> values, double p, double min, double max, ParallelOptions parallel)
    {
        int m = values.Length;
        int q = checked((int)CoveredCount(m, p));
        int l = m - q;
        if (l < 1 || q < 1)
        {
            throw new MetrologyException("monteCarlo.trials", $"{m} trials are too few for a {p} coverage interval.") { NotComputable = true };
        }

        var (lower, upper) = Tails(values, l, min, max, parallel);
        // 1-based r as in the text: y_(r) = lower[r - 1] for r <= L, y_(r + q) = upper[r - 1] since r + q > M - L.
        int r = (l % 2 == 0) ? l / 2 : (l + 1) / 2;
        var symmetric = new Interval(lower[r - 1], upper[r - 1]);
        int best = 1;
        double bestLength = double.PositiveInfinity;
        for (int s = 1; s <= l; s++)
        {
            double length = upper[s - 1] - lower[s - 1];
            if (length < bestLength)
            {
                bestLength = length;
                best = s;
            }
        }

        return (symmetric, new Interval(lower[best - 1], upper[best - 1]));
    }

    /// <summary>The <paramref name="l"/> smallest values in ascending order, and the <paramref name="l"/> largest in ascending order.</summary>
    internal static (double[] Lower, double[] Upper) Tails(ReadOnlyMemory<double> values, int l, double min, double max, ParallelOptions parallel)
    {
        int m = values.Length;
        if (2L * l >= m || !(max > min) || !double.IsFinite(max - min))
        {
            return SortedTails(values, l); // the tails overlap, or the values span nothing a histogram can split
        }

        double scale = Bins / (max - min);
        int parts = Math.Clamp(m / 65_536, 1, parallel.MaxDegreeOfParallelism > 0 ? parallel.MaxDegreeOfParallelism : Environment.ProcessorCount);
        var counts = new int[parts][];
        Parallel.For(0, parts, parallel, part =>
        {
            var c = counts[part] = new int[Bins];
            foreach (double v in Part(values, part, parts))
            {
                c[Bin(v, min, scale)]++;
            }
        });
        var total = new int[Bins];
        for (int part = 0; part < parts; part++)
        {
            for (int b = 0; b < Bins; b++)
            {
                total[b] += counts[part][b];
            }
        }

        // lowBin: the first bin by which L values have been seen; highBin likewise from the top.
        int lowBin = 0;
        for (long seen = total[0]; seen < l; seen += total[++lowBin]) { }
        int highBin = Bins - 1;
        for (long seen = total[Bins - 1]; seen < l; seen += total[--highBin]) { }
        long lowCount = 0, highCount = 0;
        for (int b = 0; b <= lowBin; b++) { lowCount += total[b]; }
        for (int b = highBin; b < Bins; b++) { highCount += total[b]; }
        if (lowCount > 4L * l + 1024 || highCount > 4L * l + 1024)
        {
            return SortedTails(values, l); // values crowded into a few bins (a far outlier): sort instead
        }

        // Each part writes its tail values at its own offset, so the copies are in input order whatever the threads do.
        var lowStart = new int[parts + 1];
        var highStart = new int[parts + 1];
        for (int part = 0; part < parts; part++)
        {
            int nl = 0, nh = 0;
            for (int b = 0; b <= lowBin; b++) { nl += counts[part][b]; }
            for (int b = highBin; b < Bins; b++) { nh += counts[part][b]; }
            lowStart[part + 1] = lowStart[part] + nl;
            highStart[part + 1] = highStart[part] + nh;
        }

        var low = new double[lowCount];
        var high = new double[highCount];
        Parallel.For(0, parts, parallel, part =>
        {
            int nl = lowStart[part], nh = highStart[part];
            foreach (double v in Part(values, part, parts))
            {
                int b = Bin(v, min, scale);
                if (b <= lowBin)
                {
                    low[nl++] = v;
                }

                if (b >= highBin)
                {
                    high[nh++] = v;
                }
            }
        });

        Parallel.Invoke(parallel, () => RadixSort(low), () => RadixSort(high));
        return (low[..l], high[^l..]);
    }

    private static ReadOnlySpan<double> Part(ReadOnlyMemory<double> values, int part, int parts)
    {
        long start = (long)values.Length * part / parts;
        long end = (long)values.Length * (part + 1) / parts;
        return values.Span.Slice((int)start, (int)(end - start));
    }

    /// <summary>
    /// Sorts finite doubles ascending by least-significant-digit radix sort on their bit patterns (sign flipped so that
    /// unsigned order is numeric order), eight passes of one byte; O(n), and much faster than comparison sorting here.
    /// </summary>
    internal static void RadixSort(double[] values)
    {
        int n = values.Length;
        if (n < 256)
        {
            Array.Sort(values);
            return;
        }

        var keys = new ulong[n];
        var buffer = new ulong[n];
        for (int i = 0; i < n; i++)
        {
            ulong bits = (ulong)BitConverter.DoubleToInt64Bits(values[i]);
            keys[i] = (bits & 0x8000_0000_0000_0000UL) != 0 ? ~bits : bits | 0x8000_0000_0000_0000UL;
        }

        Span<int> offsets = stackalloc int[256];
        for (int shift = 0; shift < 64; shift += 8)
        {
            offsets.Clear();
            foreach (ulong k in keys)
            {
                offsets[(int)((k >> shift) & 0xFF)]++;
            }

            if (offsets[(int)((keys[0] >> shift) & 0xFF)] == n)
            {
                continue; // every key has the same byte here: nothing to move
            }

            int sum = 0;
            for (int d = 0; d < 256; d++)
            {
                int c = offsets[d];
                offsets[d] = sum;
                sum += c;
            }

            foreach (ulong k in keys)
            {
                buffer[offsets[(int)((k >> shift) & 0xFF)]++] = k;
            }

            (keys, buffer) = (buffer, keys);
        }

        for (int i = 0; i < n; i++)
        {
            ulong k = keys[i];
            ulong bits = (k & 0x8000_0000_0000_0000UL) != 0 ? k & 0x7FFF_FFFF_FFFF_FFFFUL : ~k;
            values[i] = BitConverter.Int64BitsToDouble((long)bits);
        }
    }

    private static int Bin(double v, double min, double scale) => Math.Min((int)((v - min) * scale), Bins - 1);

    private static (double[] Lower, double[] Upper) SortedTails(ReadOnlyMemory<double> values, int l)
    {
        var all = values.ToArray();
        Array.Sort(all);
        return (all[..l], all[^l..]);
    }
}
