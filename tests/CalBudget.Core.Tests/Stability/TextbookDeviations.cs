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
}
