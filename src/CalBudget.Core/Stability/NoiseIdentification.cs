namespace CalBudget.Core.Stability;

/// <summary>
/// Power-law noise identification by the lag-1 autocorrelation (W. J. Riley and C. A. Greenhall, 2004; NIST SP 1065 5.6).
/// At averaging factor m the frequency readings are averaged (phase readings decimated) by m, the trend removed (linear
/// for frequency, quadratic for phase), and the series differenced until delta = r1 / (1 + r1) is below 0.25; then
/// alpha = -round(2 delta) - 2d, plus 2 for phase data.
/// </summary>
internal static class NoiseIdentification
{
    /// <summary>The fewest points after averaging that the method is trusted with.</summary>
    public const int MinimumPoints = 30;

    /// <summary>The noise exponent alpha at m, or null when too few points remain (or the data are constant).</summary>
    public static int? Identify(ReadOnlySpan<double> values, StabilityDataType type, int m, int maxDifferences)
    {
        var z = Reduce(values, type, m);
        if (z.Count < MinimumPoints)
        {
            return null;
        }

        var series = z.ToArray();
        Detrend(series, type == StabilityDataType.Phase ? 2 : 1);
        for (int d = 0; ; d++)
        {
            double? r1 = LagOne(series);
            if (r1 is null)
            {
                return null;
            }

            double delta = r1.Value / (1 + r1.Value);
            if (delta < 0.25 || d >= maxDifferences)
            {
                int alpha = -(int)Math.Round(2 * delta, MidpointRounding.AwayFromZero) - 2 * d + (type == StabilityDataType.Phase ? 2 : 0);
                return Math.Clamp(alpha, -2 * maxDifferences, 2);
            }

            series = Difference(series);
            if (series.Length < MinimumPoints / 2)
            {
                return null;
            }
        }
    }

    // Averages of m consecutive frequency readings, or every m-th phase reading; a block or a point with a gap is dropped.
    private static List<double> Reduce(ReadOnlySpan<double> values, StabilityDataType type, int m)
    {
        var z = new List<double>(values.Length / Math.Max(m, 1) + 1);
        if (type == StabilityDataType.Phase)
        {
            for (int i = 0; i < values.Length; i += m)
            {
                if (!double.IsNaN(values[i]))
                {
                    z.Add(values[i]);
                }
            }

            return z;
        }

        for (int start = 0; start + m <= values.Length; start += m)
        {
            double sum = 0;
            bool gap = false;
            for (int i = start; i < start + m; i++)
            {
                gap |= double.IsNaN(values[i]);
                sum += values[i];
            }

            if (!gap)
            {
                z.Add(sum / m);
            }
        }

        return z;
    }

    // Least-squares polynomial of the given degree in the index, subtracted (normal equations on a centred index).
    private static void Detrend(double[] z, int degree)
    {
        int n = z.Length;
        double c = (n - 1) / 2.0;
        var a = new double[degree + 1, degree + 1];
        var b = new double[degree + 1];
        for (int i = 0; i < n; i++)
        {
            double t = (i - c) / Math.Max(c, 1);
            double p = 1;
            var powers = new double[2 * degree + 1];
            for (int k = 0; k <= 2 * degree; k++)
            {
                powers[k] = p;
                p *= t;
            }

            for (int r = 0; r <= degree; r++)
            {
                b[r] += powers[r] * z[i];
                for (int q = 0; q <= degree; q++)
                {
                    a[r, q] += powers[r + q];
                }
            }
        }

        var coefficients = MathNet.Numerics.LinearAlgebra.Matrix<double>.Build.DenseOfArray(a)
            .Solve(MathNet.Numerics.LinearAlgebra.Vector<double>.Build.DenseOfArray(b));
        for (int i = 0; i < n; i++)
        {
            double t = (i - c) / Math.Max(c, 1);
            double fit = 0, p = 1;
            for (int k = 0; k <= degree; k++)
            {
                fit += coefficients[k] * p;
                p *= t;
            }

            z[i] -= fit;
        }
    }

    private static double? LagOne(double[] z)
    {
        double mean = z.Average();
        double num = 0, den = 0;
        for (int i = 0; i < z.Length; i++)
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

    private static double[] Difference(double[] z)
    {
        var d = new double[z.Length - 1];
        for (int i = 0; i < d.Length; i++)
        {
            d[i] = z[i + 1] - z[i];
        }

        return d;
    }
}
