namespace CalBudget.Core.Tests.Stability;

/// <summary>
/// The SP 1065 definitions from fractional-frequency data, written as the textbook has them (nested sums, O(N m) and
/// worse), as the reference the fast forms are checked against. A term that touches a gap (NaN) is left out.
/// </summary>
internal static class TextbookDeviations
{
    public static (double Dev, int Count) Adev(double[] y, int m)
    {
        var means = GroupMeans(y, m);
        return Finish(Enumerable.Range(0, means.Length - 1).Select(k => means[k + 1] - means[k]), 2);
    }

    public static (double Dev, int Count) Hdev(double[] y, int m)
    {
        var means = GroupMeans(y, m);
        return Finish(Enumerable.Range(0, means.Length - 2).Select(k => means[k + 2] - 2 * means[k + 1] + means[k]), 6);
    }

    // SP 1065 eq. (9)
    public static (double Dev, int Count) Oadev(double[] y, int m)
    {
        var terms = new List<double>();
        for (int j = 0; j + 2 * m <= y.Length; j++)
        {
            double s = 0;
            for (int i = j; i < j + m; i++)
            {
                s += y[i + m] - y[i];
            }

            terms.Add(s / m);
        }

        return Finish(terms, 2);
    }

    // SP 1065 eq. (15)
    public static (double Dev, int Count) Mdev(double[] y, int m)
    {
        var terms = new List<double>();
        for (int j = 0; j + 3 * m - 1 <= y.Length; j++)
        {
            double outer = 0;
            for (int i = j; i < j + m; i++)
            {
                double inner = 0;
                for (int k = i; k < i + m; k++)
                {
                    inner += y[k + m] - y[k];
                }

                outer += inner;
            }

            terms.Add(outer / (m * (double)m));
        }

        return Finish(terms, 2);
    }

    // SP 1065 eq. (19)
    public static (double Dev, int Count) Ohdev(double[] y, int m)
    {
        var terms = new List<double>();
        for (int j = 0; j + 3 * m <= y.Length; j++)
        {
            double s = 0;
            for (int i = j; i < j + m; i++)
            {
                s += y[i + 2 * m] - 2 * y[i + m] + y[i];
            }

            terms.Add(s / m);
        }

        return Finish(terms, 6);
    }

    // SP 1065 eq. (25) with the reflected phase written out as an array.
    public static (double Dev, int Count) Totdev(double[] y, int m, double tau0 = 1)
    {
        int n = y.Length + 1;
        var x = new double[n];
        for (int i = 0; i < y.Length; i++)
        {
            x[i + 1] = x[i] + y[i] * tau0;
        }

        var ext = new double[3 * n - 4];
        for (int j = 1; j <= n - 2; j++)
        {
            ext[n - 2 - j] = 2 * x[0] - x[j];
            ext[2 * n - 2 + j - 1] = 2 * x[n - 1] - x[n - 1 - j];
        }

        Array.Copy(x, 0, ext, n - 2, n);
        double sum = 0;
        for (int i = 1; i <= n - 2; i++)
        {
            int c = i + n - 2;
            double d = ext[c - m] - 2 * ext[c] + ext[c + m];
            sum += d * d;
        }

        return (Math.Sqrt(sum / (2.0 * m * m * tau0 * tau0 * (n - 2))), n - 2);
    }

    private static double[] GroupMeans(double[] y, int m) =>
        Enumerable.Range(0, y.Length / m).Select(k => y.Skip(k * m).Take(m).Average()).ToArray();

    private static (double Dev, int Count) Finish(IEnumerable<double> terms, double divisor)
    {
        var valid = terms.Where(t => !double.IsNaN(t)).ToArray();
        return (Math.Sqrt(valid.Sum(t => t * t) / (divisor * valid.Length)), valid.Length);
    }

    // NIST SP 1065 5.6 (lag-1 autocorrelation), from frequency data as written there: the averages of m readings (a block
    // with a gap dropped), a straight line fitted by the plain normal equations in the index and subtracted, r1 about the
    // mean, differenced until delta = r1 / (1 + r1) < 0.25 or maxDifferences is reached; alpha = -round(2 delta) - 2d.
    public static int? NoiseAlpha(double[] y, int m, int maxDifferences)
    {
        var z = new List<double>();
        for (int start = 0; start + m <= y.Length; start += m)
        {
            var block = y.Skip(start).Take(m).ToArray();
            if (!block.Any(double.IsNaN))
            {
                z.Add(block.Average());
            }
        }

        if (z.Count < 30)
        {
            return null;
        }

        int n = z.Count;
        double st = 0, stt = 0, sz = 0, stz = 0;
        for (int i = 0; i < n; i++)
        {
            st += i;
            stt += (double)i * i;
            sz += z[i];
            stz += i * z[i];
        }

        double slope = (n * stz - st * sz) / (n * stt - st * st);
        double intercept = (sz - slope * st) / n;
        var series = Enumerable.Range(0, n).Select(i => z[i] - (intercept + slope * i)).ToArray();
        for (int d = 0; ; d++)
        {
            double mean = series.Average();
            double num = 0, den = 0;
            for (int i = 0; i < series.Length; i++)
            {
                den += (series[i] - mean) * (series[i] - mean);
                if (i + 1 < series.Length)
                {
                    num += (series[i] - mean) * (series[i + 1] - mean);
                }
            }

            double r1 = num / den;
            double delta = r1 / (1 + r1);
            if (delta < 0.25 || d >= maxDifferences)
            {
                return Math.Clamp(-(int)Math.Round(2 * delta, MidpointRounding.AwayFromZero) - 2 * d, -2 * maxDifferences, 2);
            }

            series = Enumerable.Range(0, series.Length - 1).Select(i => series[i + 1] - series[i]).ToArray();
        }
    }
}
