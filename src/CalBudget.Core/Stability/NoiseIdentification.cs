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
    private readonly StabilityDataType _type;
    private readonly double[] _prefix = [];   // frequency: prefix sums of the mean-removed readings (gaps as 0)
    private readonly int[] _gapsBefore = [];  // frequency: gaps among the first k readings

    /// <summary>Prepares the readings once, so that each averaging factor costs O(N / m).</summary>
    public NoiseIdentification(ReadOnlyMemory<double> readings, StabilityDataType type)
    {
        _values = readings;
        var values = readings.Span;
        _type = type;
        if (type == StabilityDataType.Frequency)
        {
            double mean = PhaseSeries.MeanOfReadings(values).Mean;
            _prefix = new double[values.Length + 1];
            _gapsBefore = new int[values.Length + 1];
            for (int i = 0; i < values.Length; i++)
            {
                bool gap = double.IsNaN(values[i]);
                _prefix[i + 1] = _prefix[i] + (gap ? 0 : values[i] - mean);
                _gapsBefore[i + 1] = _gapsBefore[i] + (gap ? 1 : 0);
            }
        }
    }

    /// <summary>The noise exponent alpha at m, or null when too few points remain (or the data are constant).</summary>
    public int? Identify(int m, int maxDifferences)
    {
        var series = Reduce(m);
        if (series.Length < MinimumPoints)
        {
            return null;
        }

        Detrend(series, _type == StabilityDataType.Phase ? 2 : 1);
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
                int alpha = -(int)Math.Round(2 * delta, MidpointRounding.AwayFromZero) - 2 * d + (_type == StabilityDataType.Phase ? 2 : 0);
                return Math.Clamp(alpha, -2 * maxDifferences, 2);
            }

            series = Difference(series);
            if (series.Length < MinimumPoints / 2)
            {
                return null;
            }
        }
    }

    // Averages of m consecutive frequency readings (from the prefix sums), or every m-th phase reading; a block or a
    // point with a gap is dropped.
    private double[] Reduce(int m)
    {
        var values = _values.Span;
        var z = new double[values.Length / m + 1];
        int count = 0;
        if (_type == StabilityDataType.Phase)
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
            for (int start = 0; start + m <= values.Length; start += m)
            {
                if (_gapsBefore[start + m] == _gapsBefore[start])
                {
                    z[count++] = (_prefix[start + m] - _prefix[start]) / m;
                }
            }
        }

        return count == z.Length ? z : z[..count];
    }

    // Least-squares polynomial of degree 1 or 2 in the centred index t = i - (n - 1)/2, subtracted. With a centred index the
    // odd power sums vanish, so the normal equations split: c1 = sum(t z) / sum(t^2), and c0, c2 from a 2 x 2 system.
    private static void Detrend(double[] z, int degree)
    {
        int n = z.Length;
        double c = (n - 1) / 2.0;
        double s0 = n, s2 = 0, s4 = 0, b0 = 0, b1 = 0, b2 = 0;
        for (int i = 0; i < n; i++)
        {
            double t = i - c;
            double t2 = t * t;
            s2 += t2;
            s4 += t2 * t2;
            b0 += z[i];
            b1 += t * z[i];
            b2 += t2 * z[i];
        }

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

        for (int i = 0; i < n; i++)
        {
            double t = i - c;
            z[i] -= c0 + c1 * t + c2 * t * t;
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
