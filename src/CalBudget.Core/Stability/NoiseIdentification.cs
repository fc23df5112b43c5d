using System.Buffers;
using System.Runtime.Intrinsics;

namespace CalBudget.Core.Stability;

/// <summary>
/// Power-law noise identification by the lag-1 autocorrelation (W. J. Riley and C. A. Greenhall, 2004; NIST SP 1065 5.6).
/// At averaging factor m the frequency readings are averaged (phase readings decimated) by m, the trend removed (linear
/// for frequency, quadratic for phase), and the series differenced until delta = r1 / (1 + r1) is below 0.25; then
/// alpha = -round(2 delta) - 2d, plus 2 for phase data.
/// </summary>
internal sealed class NoiseIdentification
{
    /// <summary>The fewest points after averaging that the method is trusted with.</summary>
    public const int MinimumPoints = 30;

    private readonly ReadOnlyMemory<double> _values;
    private readonly PhaseSeries _series;

    /// <summary>
    /// Uses the phase already formed from <paramref name="readings"/> (its differences are the sums of m readings), so that
    /// each averaging factor costs O(N / m).
    /// </summary>
    public NoiseIdentification(PhaseSeries series, ReadOnlyMemory<double> readings)
    {
        _series = series;
        _values = readings;
    }

    /// <summary>The noise exponent alpha at m, or null when too few points remain (or the data are constant).</summary>
    public int? Identify(int m, int maxDifferences)
    {
        bool phase = _series.DataType == StabilityDataType.Phase;
        double[] rented = ArrayPool<double>.Shared.Rent(_values.Length / m + 1);
        try
        {
            var series = Reduce(m, rented, out var moments);
            if (series.Length < MinimumPoints)
            {
                return null;
            }

            // the first lag-1 autocorrelation is taken of the residuals as they are computed; they are stored only when the
            // series has to be differenced
            var trend = FitTrend(series.Length, phase ? 2 : 1, moments);
            double? r1 = LagOneOfResiduals(series, trend);
            for (int d = 0; ; d++)
            {
                if (r1 is null)
                {
                    return null;
                }

                double delta = r1.Value / (1 + r1.Value);
                if (delta < 0.25 || d >= maxDifferences)
                {
                    int alpha = -(int)Math.Round(2 * delta, MidpointRounding.AwayFromZero) - 2 * d + (phase ? 2 : 0);
                    return Math.Clamp(alpha, -2 * maxDifferences, 2);
                }

                if (d == 0)
                {
                    Subtract(series, trend);
                }

                series = Difference(series);
                if (series.Length < MinimumPoints / 2)
                {
                    return null;
                }

                r1 = LagOne(series);
            }
        }
        finally
        {
            ArrayPool<double>.Shared.Return(rented);
        }
    }

    // Averages of m consecutive frequency readings (differences of the phase over m samples), or every m-th phase reading;
    // a block or a point with a gap is dropped. Also the moments sum z, sum t z, sum t^2 z about the centred index t: taken
    // along when the count is known in advance (frequency without gaps), else in a second pass.
    private Span<double> Reduce(int m, double[] z, out (double B0, double B1, double B2) moments)
    {
        var values = _values.Span;
        int count = 0;
        if (_series.DataType == StabilityDataType.Phase)
        {
            for (int i = 0; i < values.Length; i += m)
            {
                if (!double.IsNaN(values[i]))
                {
                    z[count++] = values[i];
                }
            }
        }
        else
        {
            var x = _series.X;
            double scale = 1 / (m * _series.Tau0);
            if (_series.GapCount == 0)
            {
                count = values.Length / m;
                double c = (count - 1) / 2.0;
                double b0 = 0, b1 = 0, b2 = 0;
                for (int k = 0; k < count; k++)
                {
                    double v = (x[(k + 1) * m] - x[k * m]) * scale;
                    double t = k - c;
                    z[k] = v;
                    b0 += v;
                    b1 += t * v;
                    b2 += t * t * v;
                }

                moments = (b0, b1, b2);
                return z.AsSpan(0, count);
            }

            for (int start = 0; start + m <= values.Length; start += m)
            {
                if (_series.Complete(start, start + m))
                {
                    z[count++] = (x[start + m] - x[start]) * scale;
                }
            }
        }

        var series = z.AsSpan(0, count);
        moments = Moments(series, (count - 1) / 2.0);
        return series;
    }

    // Least-squares polynomial of degree 1 or 2 in the centred index t = i - (n - 1)/2, as c0 + c1 t + c2 t^2. With a centred
    // index the odd power sums vanish, so the normal equations split: c1 = sum(t z) / sum(t^2), and c0, c2 from a 2 x 2
    // system; the even power sums have closed forms.
    internal static Trend FitTrend(int n, int degree, (double B0, double B1, double B2) moments)
    {
        var (b0, b1, b2) = moments;
        double s0 = n, s2 = n * ((double)n * n - 1) / 12, s4 = n * ((double)n * n - 1) * (3.0 * n * n - 7) / 240;
        double c1 = s2 > 0 ? b1 / s2 : 0;
        double c0 = b0 / s0, c2 = 0;
        if (degree == 2)
        {
            double det = s0 * s4 - s2 * s2;
            if (det != 0)
            {
                c0 = (b0 * s4 - b2 * s2) / det;
                c2 = (s0 * b2 - s2 * b0) / det;
            }
        }

        return new Trend(c0, c1, c2);
    }

    // The trend subtracted, in place.
    internal static void Subtract(Span<double> z, Trend trend)
    {
        int n = z.Length;
        double c = (n - 1) / 2.0;
        int i = 0;
        if (Vector256.IsHardwareAccelerated)
        {
            var t = Vector256.Create(-c, 1 - c, 2 - c, 3 - c);
            var four = Vector256.Create(4.0);
            for (; i <= n - 4; i += 4, t += four)
            {
                var slice = z.Slice(i, 4);
                (Vector256.Create<double>(slice) - trend.At(t)).CopyTo(slice);
            }
        }

        for (; i < n; i++)
        {
            z[i] -= trend.At(i - c);
        }
    }

    // The lag-1 autocorrelation of the residuals e = z - trend without storing them: one pass gives sum e, sum e^2 and
    // sum e_i e_(i+1), from which the autocorrelation about the residuals' mean follows exactly as LagOne takes it.
    internal static double? LagOneOfResiduals(ReadOnlySpan<double> z, Trend trend)
    {
        int n = z.Length;
        double c = (n - 1) / 2.0;
        double sum = 0, squares = 0, products = 0;
        int k = 0;
        if (Vector256.IsHardwareAccelerated)
        {
            var t = Vector256.Create(-c, 1 - c, 2 - c, 3 - c);
            var one = Vector256.Create(1.0);
            var four = Vector256.Create(4.0);
            Vector256<double> s = default, q = default, p = default;
            for (; k <= n - 5; k += 4, t += four)
            {
                var e = Vector256.Create(z.Slice(k, 4)) - trend.At(t);
                var next = Vector256.Create(z.Slice(k + 1, 4)) - trend.At(t + one);
                s += e;
                q += e * e;
                p += e * next;
            }

            (sum, squares, products) = (Vector256.Sum(s), Vector256.Sum(q), Vector256.Sum(p));
        }

        for (; k < n; k++)
        {
            double e = z[k] - trend.At(k - c);
            sum += e;
            squares += e * e;
            if (k + 1 < n)
            {
                products += e * (z[k + 1] - trend.At(k + 1 - c));
            }
        }

        double first = z[0] - trend.At(-c), last = z[n - 1] - trend.At(c);
        double mean = sum / n;
        double num = products - mean * (sum - first) - mean * (sum - last) + (n - 1) * mean * mean;
        double den = squares - n * mean * mean;
        return den > 0 ? num / den : null;
    }

    // sum z, sum t z, sum t^2 z with t = i - c.
    internal static (double B0, double B1, double B2) Moments(ReadOnlySpan<double> z, double c)
    {
        double b0 = 0, b1 = 0, b2 = 0;
        int i = 0;
        if (Vector256.IsHardwareAccelerated)
        {
            var t = Vector256.Create(-c, 1 - c, 2 - c, 3 - c);
            var four = Vector256.Create(4.0);
            Vector256<double> a0 = default, a1 = default, a2 = default;
            for (; i <= z.Length - 4; i += 4, t += four)
            {
                var v = Vector256.Create(z.Slice(i, 4));
                var tv = t * v;
                a0 += v;
                a1 += tv;
                a2 += t * tv;
            }

            (b0, b1, b2) = (Vector256.Sum(a0), Vector256.Sum(a1), Vector256.Sum(a2));
        }

        for (; i < z.Length; i++)
        {
            double t = i - c;
            b0 += z[i];
            b1 += t * z[i];
            b2 += t * t * z[i];
        }

        return (b0, b1, b2);
    }

    internal static double? LagOne(ReadOnlySpan<double> z)
    {
        double mean = Sum(z) / z.Length;
        double num = 0, den = 0;
        int i = 0;
        if (Vector256.IsHardwareAccelerated)
        {
            var mv = Vector256.Create(mean);
            Vector256<double> an = default, ad = default;
            for (; i <= z.Length - 5; i += 4)
            {
                var d = Vector256.Create(z.Slice(i, 4)) - mv;
                var next = Vector256.Create(z.Slice(i + 1, 4)) - mv;
                ad += d * d;
                an += d * next;
            }

            (num, den) = (Vector256.Sum(an), Vector256.Sum(ad));
        }

        for (; i < z.Length; i++)
        {
            double d = z[i] - mean;
            den += d * d;
            if (i + 1 < z.Length)
            {
                num += d * (z[i + 1] - mean);
            }
        }

        return den > 0 ? num / den : null;
    }

    private static double Sum(ReadOnlySpan<double> z)
    {
        double sum = 0;
        int i = 0;
        if (Vector256.IsHardwareAccelerated)
        {
            Vector256<double> acc = default;
            for (; i <= z.Length - 4; i += 4)
            {
                acc += Vector256.Create(z.Slice(i, 4));
            }

            sum = Vector256.Sum(acc);
        }

        for (; i < z.Length; i++)
        {
            sum += z[i];
        }

        return sum;
    }

    // First differences, in place: the series one shorter.
    private static Span<double> Difference(Span<double> z)
    {
        for (int i = 0; i < z.Length - 1; i++)
        {
            z[i] = z[i + 1] - z[i];
        }

        return z[..^1];
    }
}

/// <summary>A fitted trend c0 + c1 t + c2 t^2 in the centred index t.</summary>
internal readonly record struct Trend(double C0, double C1, double C2)
{
    public double At(double t) => C0 + (C1 + C2 * t) * t;

    public Vector256<double> At(Vector256<double> t) =>
        Vector256.Create(C0) + (Vector256.Create(C1) + Vector256.Create(C2) * t) * t;
}
