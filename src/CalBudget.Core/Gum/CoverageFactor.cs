using System.Collections.Concurrent;
using MathNet.Numerics.Distributions;
using MathNet.Numerics.RootFinding;

namespace CalBudget.Core.Gum;

/// <summary>
/// Coverage factors k_p = t_p(nu): the two-sided quantile of Student's t for coverage probability p
/// (JCGM 100:2008 G.3 and Table G.2), or of the normal distribution for infinite degrees of freedom.
/// </summary>
public static class CoverageFactor
{
    private const int CacheLimit = 4096;
    private static readonly ConcurrentDictionary<(double Nu, double P), double> Cache = new();

    /// <summary>From here on Student's t is taken by its expansion about the normal quantile.</summary>
    public const double LargeDegreesOfFreedom = 1e6;

    /// <summary>
    /// Two-sided coverage factor for <paramref name="coverageProbability"/> in (0, 1) and
    /// <paramref name="degreesOfFreedom"/> &gt; 0 (use <see cref="double.PositiveInfinity"/> for the normal limit).
    /// The degrees of freedom are used as given; apply <see cref="ForEffectiveDegreesOfFreedom"/> for the G.4.1 truncation.
    /// </summary>
    public static double TwoSided(double coverageProbability, double degreesOfFreedom)
    {
        CheckProbability(coverageProbability);
        InputDistribution.Positive(degreesOfFreedom, "degreesOfFreedom");
        double upper = 0.5 * (1 + coverageProbability);
        if (double.IsPositiveInfinity(degreesOfFreedom))
        {
            return Normal.InvCDF(0, 1, upper);
        }

        if (degreesOfFreedom >= LargeDegreesOfFreedom)
        {
            // Cornish-Fisher: t_p(nu) = z + (z^3 + z) / (4 nu) + O(nu^-2), the next term below 1e-12 here; the root finder
            // loses its footing where the t CDF is the normal one to double precision
            double z = Normal.InvCDF(0, 1, upper);
            return z + (z * z * z + z) / (4 * degreesOfFreedom);
        }

        var key = (degreesOfFreedom, coverageProbability);
        if (Cache.TryGetValue(key, out double cached))
        {
            return cached;
        }

        double k = StudentQuantile(degreesOfFreedom, upper);
        if (Cache.Count < CacheLimit)
        {
            Cache.TryAdd(key, k);
        }

        return k;
    }

    /// <summary>
    /// Coverage factor from an effective degrees of freedom: nu_eff truncated to the next lower integer
    /// (JCGM 100 G.4.1, note 1), normal when infinite.
    /// </summary>
    public static double ForEffectiveDegreesOfFreedom(double coverageProbability, double effectiveDegreesOfFreedom)
    {
        if (double.IsPositiveInfinity(effectiveDegreesOfFreedom))
        {
            return TwoSided(coverageProbability, double.PositiveInfinity);
        }

        double truncated = Math.Floor(effectiveDegreesOfFreedom);
        if (!(truncated >= 1))
        {
            throw new MetrologyException("contributions",
                $"The effective degrees of freedom ({effectiveDegreesOfFreedom:G4}) are below 1, so no coverage factor is defined.")
            { NotComputable = true };
        }

        return TwoSided(coverageProbability, truncated);
    }

    internal static void CheckProbability(double coverageProbability)
    {
        if (!double.IsFinite(coverageProbability) || coverageProbability <= 0 || coverageProbability >= 1)
        {
            throw new MetrologyException("coverageProbability", "The coverage probability lies strictly between 0 and 1.");
        }
    }

    /// <summary>The quantile of Student's t at probability <paramref name="upper"/> in [0.5, 1): CDF_nu(t) = upper.</summary>
    /// <remarks>nu = 1 and 2 have closed forms; otherwise the root is bracketed by doubling and refined by Brent's method.</remarks>
    internal static double StudentQuantile(double nu, double upper)
    {
        if (nu == 1)
        {
            return Math.Tan(Math.PI * (upper - 0.5));
        }

        if (nu == 2)
        {
            double a = 4 * upper * (1 - upper);
            return 2 * (upper - 0.5) * Math.Sqrt(2 / a);
        }

        double lo = 0;
        double hi = Math.Max(1.0, Normal.InvCDF(0, 1, upper));
        while (StudentT.CDF(0, 1, nu, hi) < upper)
        {
            lo = hi;
            hi *= 2;
            if (hi > 1e12)
            {
                throw new MetrologyException("coverageProbability", "The coverage factor is too large to compute.") { NotComputable = true };
            }
        }

        return Brent.FindRoot(t => StudentT.CDF(0, 1, nu, t) - upper, lo, hi, 1e-13, 200);
    }
}
