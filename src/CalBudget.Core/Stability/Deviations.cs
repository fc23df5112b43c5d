namespace CalBudget.Core.Stability;

/// <summary>A variance estimate and the number of terms averaged into it.</summary>
internal readonly record struct VarianceEstimate(double Variance, int Terms);

/// <summary>
/// The SP 1065 variances from phase, each in O(N) for one averaging factor m (tau = m tau0). The modified variance uses a
/// running sum of second differences instead of the textbook double loop. A term whose span contains a gap is left out,
/// and the average is over the terms used.
/// </summary>
internal static class Deviations
{
    /// <summary>The largest averaging factor a statistic can use with N phase samples (at least one term).</summary>
    public static int MaxAveragingFactor(StabilityStatistic statistic, int n) => statistic switch
    {
        StabilityStatistic.Adev or StabilityStatistic.Oadev or StabilityStatistic.Totdev => (n - 1) / 2,
        StabilityStatistic.Mdev or StabilityStatistic.Tdev => n / 3,
        _ => (n - 1) / 3,
    };

    public static VarianceEstimate Variance(PhaseSeries s, StabilityStatistic statistic, int m) => statistic switch
    {
        StabilityStatistic.Adev => Allan(s, m, stride: m),
        StabilityStatistic.Oadev => Allan(s, m, stride: 1),
        StabilityStatistic.Mdev or StabilityStatistic.Tdev => Modified(s, m),
        StabilityStatistic.Hdev => Hadamard(s, m, stride: m),
        StabilityStatistic.Ohdev => Hadamard(s, m, stride: 1),
        StabilityStatistic.Totdev => Total(s, m),
        _ => throw new ArgumentOutOfRangeException(nameof(statistic)),
    };

    // SP 1065 eq. (7) and (8): sum (x[i+2m] - 2x[i+m] + x[i])^2 / (2 tau^2 terms), i stepping by m or by 1.
    private static VarianceEstimate Allan(PhaseSeries s, int m, int stride)
    {
        var x = s.X;
        double sum = 0;
        int terms = 0;
        for (int i = 0; i + 2 * m < x.Length; i += stride)
        {
            if (s.Complete(i, i + 2 * m))
            {
                double d = x[i + 2 * m] - 2 * x[i + m] + x[i];
                sum += d * d;
                terms++;
            }
        }

        double tau = m * s.Tau0;
        return new VarianceEstimate(terms > 0 ? sum / (2 * tau * tau * terms) : double.NaN, terms);
    }

    // SP 1065 eq. (18): sum (x[i+3m] - 3x[i+2m] + 3x[i+m] - x[i])^2 / (6 tau^2 terms).
    private static VarianceEstimate Hadamard(PhaseSeries s, int m, int stride)
    {
        var x = s.X;
        double sum = 0;
        int terms = 0;
        for (int i = 0; i + 3 * m < x.Length; i += stride)
        {
            if (s.Complete(i, i + 3 * m))
            {
                double d = x[i + 3 * m] - 3 * x[i + 2 * m] + 3 * x[i + m] - x[i];
                sum += d * d;
                terms++;
            }
        }

        double tau = m * s.Tau0;
        return new VarianceEstimate(terms > 0 ? sum / (6 * tau * tau * terms) : double.NaN, terms);
    }

    // SP 1065 eq. (14): sum over j of [sum_{i=j}^{j+m-1} (x[i+2m] - 2x[i+m] + x[i])]^2 / (2 m^2 tau^2 terms).
    // The inner sum slides: S(j+1) = S(j) + d(j+m) - d(j), with d(i) the second difference at i.
    private static VarianceEstimate Modified(PhaseSeries s, int m)
    {
        var x = s.X;
        int n = x.Length;
        if (n < 3 * m)
        {
            return new VarianceEstimate(double.NaN, 0);
        }

        double D(int i) => x[i + 2 * m] - 2 * x[i + m] + x[i];
        double inner = 0;
        for (int i = 0; i < m; i++)
        {
            inner += D(i);
        }

        double sum = 0;
        int terms = 0;
        for (int j = 0; j + 3 * m - 1 < n; j++)
        {
            if (j > 0)
            {
                inner += D(j + m - 1) - D(j - 1);
            }

            if (s.Complete(j, j + 3 * m - 1))
            {
                sum += inner * inner;
                terms++;
            }
        }

        double tau = m * s.Tau0;
        return new VarianceEstimate(terms > 0 ? sum / (2.0 * m * m * tau * tau * terms) : double.NaN, terms);
    }

    // SP 1065 eq. (25): phase extended by reflection at both ends, x*(-j) = 2x(0) - x(j) and x*(N-1+j) = 2x(N-1) - x(N-1-j)
    // for j = 1..N-2; sum over i = 1..N-2 of (x*(i-m) - 2x*(i) + x*(i+m))^2 / (2 tau^2 (N - 2)).
    private static VarianceEstimate Total(PhaseSeries s, int m)
    {
        var x = s.X;
        int n = x.Length;
        if (n < 3 || m > n - 2)
        {
            return new VarianceEstimate(double.NaN, 0);
        }

        double At(int i) => i < 0 ? 2 * x[0] - x[-i] : i > n - 1 ? 2 * x[n - 1] - x[2 * (n - 1) - i] : x[i];
        double sum = 0;
        for (int i = 1; i <= n - 2; i++)
        {
            double d = At(i - m) - 2 * x[i] + At(i + m);
            sum += d * d;
        }

        double tau = m * s.Tau0;
        return new VarianceEstimate(sum / (2 * tau * tau * (n - 2)), n - 2);
    }
}
