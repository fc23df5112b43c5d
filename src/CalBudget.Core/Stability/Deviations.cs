using System.Buffers;
using System.Numerics;

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
        double tau = m * s.Tau0;
        if (stride == 1 && s.GapCount == 0)
        {
            int count = x.Length - 2 * m;
            return new VarianceEstimate(count > 0 ? SecondDifferenceSquares(x, m, 0, count) / (2 * tau * tau * count) : double.NaN, Math.Max(count, 0));
        }

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

        return new VarianceEstimate(terms > 0 ? sum / (2 * tau * tau * terms) : double.NaN, terms);
    }

    // sum over i in [from, from + count) of (x[i+2m] - 2x[i+m] + x[i])^2, four lanes at a time.
    private static double SecondDifferenceSquares(double[] x, int m, int from, int count)
    {
        var a = x.AsSpan(from, count);
        var b = x.AsSpan(from + m, count);
        var c = x.AsSpan(from + 2 * m, count);
        var acc = Vector<double>.Zero;
        var two = new Vector<double>(2.0);
        int w = Vector<double>.Count;
        int i = 0;
        for (; i <= count - w; i += w)
        {
            var d = new Vector<double>(c[i..]) - two * new Vector<double>(b[i..]) + new Vector<double>(a[i..]);
            acc += d * d;
        }

        double sum = Vector.Sum(acc);
        for (; i < count; i++)
        {
            double d = c[i] - 2 * b[i] + a[i];
            sum += d * d;
        }

        return sum;
    }

    // sum over i in [0, count) of (x[i+3m] - 3x[i+2m] + 3x[i+m] - x[i])^2, four lanes at a time.
    private static double ThirdDifferenceSquares(double[] x, int m, int count)
    {
        var a = x.AsSpan(0, count);
        var b = x.AsSpan(m, count);
        var c = x.AsSpan(2 * m, count);
        var e = x.AsSpan(3 * m, count);
        var acc = Vector<double>.Zero;
        var three = new Vector<double>(3.0);
        int w = Vector<double>.Count;
        int i = 0;
        for (; i <= count - w; i += w)
        {
            var d = new Vector<double>(e[i..]) - three * (new Vector<double>(c[i..]) - new Vector<double>(b[i..])) - new Vector<double>(a[i..]);
            acc += d * d;
        }

        double sum = Vector.Sum(acc);
        for (; i < count; i++)
        {
            double d = e[i] - 3 * (c[i] - b[i]) - a[i];
            sum += d * d;
        }

        return sum;
    }

    // SP 1065 eq. (18): sum (x[i+3m] - 3x[i+2m] + 3x[i+m] - x[i])^2 / (6 tau^2 terms).
    private static VarianceEstimate Hadamard(PhaseSeries s, int m, int stride)
    {
        var x = s.X;
        if (stride == 1 && s.GapCount == 0)
        {
            int count = x.Length - 3 * m;
            double t = m * s.Tau0;
            return new VarianceEstimate(count > 0 ? ThirdDifferenceSquares(x, m, count) / (6 * t * t * count) : double.NaN, Math.Max(count, 0));
        }

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

        if (s.GapCount == 0)
        {
            return ModifiedWithoutGaps(s, m);
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

    private static VarianceEstimate ModifiedWithoutGaps(PhaseSeries s, int m)
    {
        var x = s.X;
        int n = x.Length;
        int dCount = n - 2 * m;
        var rented = ArrayPool<double>.Shared.Rent(dCount);
        try
        {
            var d = rented.AsSpan(0, dCount);
            var a = x.AsSpan(0, dCount);
            var b = x.AsSpan(m, dCount);
            var c = x.AsSpan(2 * m, dCount);
            for (int i = 0; i < dCount; i++)
            {
                d[i] = c[i] - 2 * b[i] + a[i];
            }

            double inner = 0;
            for (int i = 0; i < m; i++)
            {
                inner += d[i];
            }

            double sum = inner * inner;
            int terms = n - 3 * m + 1;
            var add = d[m..];
            var drop = d[..(terms - 1)];
            for (int j = 0; j < terms - 1; j++)
            {
                inner += add[j] - drop[j];
                sum += inner * inner;
            }

            double tau = m * s.Tau0;
            return new VarianceEstimate(sum / (2.0 * m * m * tau * tau * terms), terms);
        }
        finally
        {
            ArrayPool<double>.Shared.Return(rented);
        }
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
        // Only near the ends does a term reach into the reflected extension; the middle needs no branch.
        int middleFrom = Math.Max(1, m), middleTo = Math.Min(n - 2, n - 1 - m);
        for (int i = 1; i < Math.Min(middleFrom, n - 1); i++)
        {
            double d = At(i - m) - 2 * x[i] + At(i + m);
            sum += d * d;
        }

        if (middleTo >= middleFrom)
        {
            sum += SecondDifferenceSquares(x, m, middleFrom - m, middleTo - middleFrom + 1);
        }

        for (int i = Math.Max(middleFrom, middleTo + 1); i <= n - 2; i++)
        {
            double d = At(i - m) - 2 * x[i] + At(i + m);
            sum += d * d;
        }

        double tau = m * s.Tau0;
        return new VarianceEstimate(sum / (2 * tau * tau * (n - 2)), n - 2);
    }
}
