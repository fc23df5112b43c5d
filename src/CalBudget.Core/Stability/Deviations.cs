using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;

namespace CalBudget.Core.Stability;

/// <summary>A variance estimate and the number of terms averaged into it.</summary>
internal readonly record struct VarianceEstimate(double Variance, int Terms);

/// <summary>Sums of squared phase differences at one averaging factor, each with its number of terms.</summary>
/// <param name="Second">Sum of (x[k+2m] - 2x[k+m] + x[k])^2 over k = 0..N-2m-1.</param>
/// <param name="SecondTerms">N - 2m, or 0.</param>
/// <param name="Third">Sum of (x[k+3m] - 3x[k+2m] + 3x[k+m] - x[k])^2 over k = 0..N-3m-1.</param>
/// <param name="ThirdTerms">N - 3m, or 0.</param>
/// <param name="Modified">Sum over j = 0..N-3m of the squared inner sums of SP 1065 eq. (14).</param>
/// <param name="ModifiedTerms">N - 3m + 1, or 0.</param>
internal readonly record struct DifferenceSums(double Second, int SecondTerms, double Third, int ThirdTerms, double Modified, int ModifiedTerms);

/// <summary>
/// The SP 1065 variances from phase, each in O(N) for one averaging factor m (tau = m tau0). Without gaps the overlapping
/// statistics come from one pass that gives all their sums at once (<see cref="Sums"/>); the modified variance's inner sum
/// runs along instead of the textbook double loop. With gaps, a term whose span contains one is left out, and the average
/// is over the terms used.
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

    /// <summary>True for the statistics whose gap-free variance comes from <see cref="Sums"/>.</summary>
    public static bool UsesSums(StabilityStatistic statistic) => statistic is StabilityStatistic.Oadev or StabilityStatistic.Mdev
        or StabilityStatistic.Tdev or StabilityStatistic.Ohdev or StabilityStatistic.Totdev;

    /// <summary>
    /// The variance of <paramref name="statistic"/> at m (TDEV: the modified variance, which it rescales). Pass the series'
    /// <see cref="Sums"/> at m when they are already known, so that several statistics share one pass.
    /// </summary>
    public static VarianceEstimate Variance(PhaseSeries s, StabilityStatistic statistic, int m, DifferenceSums? sums = null)
    {
        if (s.GapCount == 0 && UsesSums(statistic))
        {
            var d = sums ?? Sums(s.X, m);
            double tau = m * s.Tau0;
            return statistic switch
            {
                StabilityStatistic.Oadev => Mean(d.Second, d.SecondTerms, 2 * tau * tau),
                StabilityStatistic.Ohdev => Mean(d.Third, d.ThirdTerms, 6 * tau * tau),
                StabilityStatistic.Totdev => Total(s, m, d.Second),
                _ => Mean(d.Modified, d.ModifiedTerms, 2.0 * m * m * tau * tau),
            };
        }

        return statistic switch
        {
            StabilityStatistic.Adev => Allan(s, m, stride: m),
            StabilityStatistic.Oadev => Allan(s, m, stride: 1),
            StabilityStatistic.Mdev or StabilityStatistic.Tdev => Modified(s, m),
            StabilityStatistic.Hdev => Hadamard(s, m, stride: m),
            StabilityStatistic.Ohdev => Hadamard(s, m, stride: 1),
            StabilityStatistic.Totdev => throw new ArgumentException("TOTDEV is not defined across gaps.", nameof(s)),
            _ => throw new ArgumentOutOfRangeException(nameof(statistic)),
        };
    }

    private static VarianceEstimate Mean(double sum, int terms, double scale) =>
        new(terms > 0 ? sum / (scale * terms) : double.NaN, terms);

    /// <summary>
    /// The sums of squares that one pass over gap-free phase gives at factor m, shared by the overlapping statistics: the
    /// second differences (OADEV, and TOTDEV's terms that do not reach into the reflection), the third differences (OHDEV),
    /// and the inner sums of the modified variance (MDEV, TDEV), each with its term count (0 where m is too large).
    /// </summary>
    public static DifferenceSums Sums(ReadOnlySpan<double> x, int m)
    {
        int n = x.Length;
        int second = Math.Max(n - 2 * m, 0), third = Math.Max(n - 3 * m, 0);
        int modified = n >= 3 * m ? n - 3 * m + 1 : 0;

        // The modified variance's inner sum at j is sum over i = j..j+m-1 of the second difference at i; from one j to the
        // next it gains the third difference at j (SP 1065 eq. (14) rearranged), so it runs along with the other two sums.
        double inner = 0;
        if (modified > 0)
        {
            for (int i = 0; i < m; i++)
            {
                inner += x[i + 2 * m] - 2 * x[i + m] + x[i];
            }
        }

        double sumSecond = 0, sumThird = 0, sumModified = inner * inner;
        ref double origin = ref MemoryMarshal.GetReference(x);
        int k = 0;
        if (Vector256.IsHardwareAccelerated && third >= 8)
        {
            var accSecond = Vector256<double>.Zero;
            var accThird = Vector256<double>.Zero;
            var accModified = Vector256<double>.Zero;
            var carry = Vector256.Create(inner);
            var two = Vector256.Create(2.0);
            var three = Vector256.Create(3.0);
            for (; k <= third - 4; k += 4)
            {
                var a = Vector256.LoadUnsafe(ref origin, (nuint)k);
                var b = Vector256.LoadUnsafe(ref origin, (nuint)(k + m));
                var c = Vector256.LoadUnsafe(ref origin, (nuint)(k + 2 * m));
                var e = Vector256.LoadUnsafe(ref origin, (nuint)(k + 3 * m));
                var d2 = c - two * b + a;
                var d3 = e - three * (c - b) - a;
                accSecond += d2 * d2;
                accThird += d3 * d3;

                // running sums of d3 across the four lanes, then carried in from the lanes before (the carry moves on by the
                // four lanes' total, so that only one addition lies on the path from one step to the next)
                var prefix = Lanes.RunningSum(d3);
                var inners = carry + prefix;
                accModified += inners * inners;
                carry += Lanes.Last(prefix);
            }

            sumSecond = Vector256.Sum(accSecond);
            sumThird = Vector256.Sum(accThird);
            sumModified += Vector256.Sum(accModified);
            inner = carry.GetElement(0);
        }

        for (; k < third; k++)
        {
            double d2 = x[k + 2 * m] - 2 * x[k + m] + x[k];
            double d3 = x[k + 3 * m] - 3 * (x[k + 2 * m] - x[k + m]) - x[k];
            sumSecond += d2 * d2;
            sumThird += d3 * d3;
            inner += d3;
            sumModified += inner * inner;
        }

        for (; k < second; k++)
        {
            double d2 = x[k + 2 * m] - 2 * x[k + m] + x[k];
            sumSecond += d2 * d2;
        }

        return new DifferenceSums(sumSecond, second, sumThird, third, sumModified, modified);
    }

    // SP 1065 eq. (7) and (8): sum (x[i+2m] - 2x[i+m] + x[i])^2 / (2 tau^2 terms), i stepping by m or by 1.
    private static VarianceEstimate Allan(PhaseSeries s, int m, int stride)
    {
        var x = s.X;
        double tau = m * s.Tau0;
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

    // SP 1065 eq. (18): sum (x[i+3m] - 3x[i+2m] + 3x[i+m] - x[i])^2 / (6 tau^2 terms), i stepping by m or by 1.
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
        return Mean(sum, terms, 6 * tau * tau);
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

        static double D(ReadOnlySpan<double> x, int i, int m) => x[i + 2 * m] - 2 * x[i + m] + x[i];
        double inner = 0;
        for (int i = 0; i < m; i++)
        {
            inner += D(x, i, m);
        }

        double sum = 0;
        int terms = 0;
        for (int j = 0; j + 3 * m - 1 < n; j++)
        {
            if (j > 0)
            {
                inner += D(x, j + m - 1, m) - D(x, j - 1, m);
            }

            if (s.Complete(j, j + 3 * m - 1))
            {
                sum += inner * inner;
                terms++;
            }
        }

        double tau = m * s.Tau0;
        return Mean(sum, terms, 2.0 * m * m * tau * tau);
    }

    // SP 1065 eq. (25): phase extended by reflection at both ends, x*(-j) = 2x(0) - x(j) and x*(N-1+j) = 2x(N-1) - x(N-1-j)
    // for j = 1..N-2; sum over i = 1..N-2 of (x*(i-m) - 2x*(i) + x*(i+m))^2 / (2 tau^2 (N - 2)). The terms at i = m..N-1-m
    // do not reach into the extension: they are the N - 2m second differences whose sum is given; only the m - 1 terms at
    // each end are added here.
    private static VarianceEstimate Total(PhaseSeries s, int m, double middleSum)
    {
        var x = s.X;
        int n = x.Length;
        if (n < 3 || m > n - 2)
        {
            return new VarianceEstimate(double.NaN, 0);
        }

        double sum = middleSum;
        if (2 * m <= n - 1)
        {
            // at the start only the left neighbour is reflected, at the end only the right one
            double twoFirst = 2 * x[0], twoLast = 2 * x[n - 1];
            for (int i = 1; i < m; i++)
            {
                double d = twoFirst - x[m - i] - 2 * x[i] + x[i + m];
                sum += d * d;
            }

            for (int i = n - m; i <= n - 2; i++)
            {
                double d = x[i - m] - 2 * x[i] + twoLast - x[2 * (n - 1) - i - m];
                sum += d * d;
            }
        }
        else
        {
            static double At(ReadOnlySpan<double> x, int i, int n) => i < 0 ? 2 * x[0] - x[-i] : i > n - 1 ? 2 * x[n - 1] - x[2 * (n - 1) - i] : x[i];
            for (int i = 1; i <= n - 2; i++)
            {
                if (i < m || i > n - 1 - m)
                {
                    double d = At(x, i - m, n) - 2 * x[i] + At(x, i + m, n);
                    sum += d * d;
                }
            }
        }

        double tau = m * s.Tau0;
        return new VarianceEstimate(sum / (2 * tau * tau * (n - 2)), n - 2);
    }
}
