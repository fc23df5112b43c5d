namespace CalBudget.Core.Tests.Stability;

internal static class ReferenceData
{
    /// <summary>
    /// NIST SP 1065 (W. J. Riley, 2008) section 12 test suite: n(1) = 1234567890, n(i+1) = 16807 n(i) mod 2147483647,
    /// y(i) = n(i) / 2147483647, i = 1..1000 (seen; ../shared/CHECKS.md).
    /// </summary>
    public static double[] Sp1065Frequency()
    {
        var y = new double[1000];
        long n = 1234567890;
        for (int i = 0; i < y.Length; i++)
        {
            y[i] = n / 2147483647.0;
            n = 16807 * n % 2147483647;
        }

        return y;
    }

    /// <summary>NBS Monograph 140, Annex 8.E, nine frequency readings, tau0 = 1 (seen; ../shared/CHECKS.md).</summary>
    public static double[] Nbs140Frequency() => [892, 809, 823, 798, 671, 644, 883, 903, 677];

    /// <summary>Power-law noise of a known kind, from seeded normal deviates (Box-Muller), for identification tests.</summary>
    public static double[] Noise(int alpha, int count, int seed)
    {
        var random = new Random(seed);
        double Normal() => Math.Sqrt(-2 * Math.Log(1 - random.NextDouble())) * Math.Cos(2 * Math.PI * random.NextDouble());
        var white = Enumerable.Range(0, count + 1).Select(_ => Normal()).ToArray();
        return alpha switch
        {
            0 => white[..count],                                              // white FM: y white
            2 => Enumerable.Range(0, count).Select(i => white[i + 1] - white[i]).ToArray(), // white PM: x white, y its difference
            -2 => white.Take(count).Select((v, i) => v).Aggregate(new List<double>(), (l, v) => { l.Add((l.Count > 0 ? l[^1] : 0) + v); return l; }).ToArray(),
            _ => throw new ArgumentOutOfRangeException(nameof(alpha)),
        };
    }
}
