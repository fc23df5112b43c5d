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
/// put in order: with q = pM (rounded as in 7.7.2) and L = M - q, the L smallest and the L largest values. They are
/// isolated by selection in O(M) and only those 2L values are sorted, instead of all M.
/// </summary>
internal static class CoverageIntervals
{
    /// <summary>q of JCGM 101 7.7.2: pM when that is a whole number, else floor(pM + 1/2).</summary>
    public static long CoveredCount(long m, double p)
    {
        double pm = p * m;
        return pm == Math.Floor(pm) ? (long)pm : (long)Math.Floor(pm + 0.5);
    }

    /// <summary>
    /// The probabilistically symmetric (7.7.2) and shortest (7.7.3) 100p % intervals. Reorders <paramref name="values"/>.
    /// </summary>
    public static (Interval Symmetric, Interval Shortest) Compute(Span<double> values, double p)
    {
        int m = values.Length;
        int q = checked((int)CoveredCount(m, p));
        int l = m - q;
        if (l < 1 || q < 1)
        {
            throw new MetrologyException("monteCarlo.trials", $"{m} trials are too few for a {p} coverage interval.") { NotComputable = true };
        }

        if (2L * l >= m)
        {
            values.Sort();
        }
        else
        {
            Select(values, l - 1);
            var rest = values[l..];
            Select(rest, m - l - l);
            values[..l].Sort();
            values[(m - l)..].Sort();
        }

        // 1-based r as in the text: y_(r) = values[r - 1].
        int r = (l % 2 == 0) ? l / 2 : (l + 1) / 2;
        var symmetric = new Interval(values[r - 1], values[r + q - 1]);
        int best = 1;
        double bestLength = double.PositiveInfinity;
        for (int s = 1; s <= l; s++)
        {
            double length = values[s + q - 1] - values[s - 1];
            if (length < bestLength)
            {
                bestLength = length;
                best = s;
            }
        }

        return (symmetric, new Interval(values[best - 1], values[best + q - 1]));
    }

    /// <summary>
    /// Rearranges <paramref name="a"/> so that a[k] is the value a full sort would put there, everything before it is
    /// no larger and everything after it no smaller (quickselect with median-of-three pivots; falls back to a sort of
    /// the remaining range if the partitions keep coming out unbalanced, so the worst case stays O(n log n)).
    /// </summary>
    public static void Select(Span<double> a, int k)
    {
        int lo = 0;
        int hi = a.Length - 1;
        int budget = 2 * (64 - System.Numerics.BitOperations.LeadingZeroCount((ulong)Math.Max(a.Length, 1)));
        while (hi > lo)
        {
            if (budget-- == 0 || hi - lo < 16)
            {
                a[lo..(hi + 1)].Sort();
                return;
            }

            int mid = lo + ((hi - lo) >> 1);
            if (a[mid] < a[lo]) { (a[mid], a[lo]) = (a[lo], a[mid]); }
            if (a[hi] < a[lo]) { (a[hi], a[lo]) = (a[lo], a[hi]); }
            if (a[hi] < a[mid]) { (a[hi], a[mid]) = (a[mid], a[hi]); }
            double pivot = a[mid];
            int i = lo;
            int j = hi;
            while (i <= j)
            {
                while (a[i] < pivot) { i++; }
                while (a[j] > pivot) { j--; }
                if (i <= j)
                {
                    (a[i], a[j]) = (a[j], a[i]);
                    i++;
                    j--;
                }
            }

            if (k <= j)
            {
                hi = j;
            }
            else if (k >= i)
            {
                lo = i;
            }
            else
            {
                return; // j < k < i: a[k] equals the pivot and is in place
            }
        }
    }
}
