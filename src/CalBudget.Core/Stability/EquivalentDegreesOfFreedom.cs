namespace CalBudget.Core.Stability;

/// <summary>
/// Equivalent degrees of freedom of the stability variances, edf = 2 E[s^2]^2 / Var[s^2], for Gaussian power-law noise.
/// </summary>
/// <remarks>
/// <para>Computed from the definition, in the way of C. A. Greenhall and W. J. Riley, "Uncertainty of stability variances
/// based on finite differences" (2004): each term of the estimate is a finite-difference filter w on the phase samples;
/// the covariance of two terms lag l apart is R(l) = sum_k c_k K(l + k), with c the filter's autocorrelation and K the
/// generalized autocovariance of the noise (|t|^g, or t^g ln|t| for even g, signs alternating every two powers); for T
/// terms edf = T^2 R(0)^2 / sum_{|l| &lt; T} (T - |l|) R(l)^2. FM noise (alpha &lt;= 0) has point-sampled phase, g = 1 - alpha;
/// white PM is exactly white at the samples (K = 1 at 0, else 0); flicker PM has no point value, so each phase sample is
/// taken as the average of the phase over its interval, i.e. the filter acts on integrated phase z (x_n = z_{n+1} - z_n)
/// with g = 3 - alpha. Random-walk and random-run FM at the samples are the discrete sums of white noise (the models of
/// SP 1065 Table 5), with polynomial kernels. MDEV's filter on the samples is dense, so beyond m = 32 it too uses the averaged form, whose
/// difference from the point form shrinks as 1/m. For polynomial kernels R vanishes beyond the
/// filter's span; for the logarithmic (flicker) kernels the sum runs to eight spans, past which the remainder is below
/// 0.2 %, and is sampled on at most 512 points when that range is long (trapezoid rule; R is smooth between the filter's
/// nodes).</para>
/// <para>TOTDEV uses the approximation edf = b N/m - c of NIST SP 1065 Table 7 (for PM noise, where TOTDEV is not
/// intended, the overlapping-Allan edf is used instead).</para>
/// </remarks>
internal static class EquivalentDegreesOfFreedom
{
    private const int MaxSampledLags = 512;
    private const int DenseLimit = 32;

    public static double Compute(StabilityStatistic statistic, int alpha, int m, int terms, int phaseSamples)
    {
        if (terms < 1)
        {
            return double.NaN;
        }

        switch (statistic)
        {
            case StabilityStatistic.Totdev when alpha <= 0:
                var (b, c) = alpha switch { 0 => (1.50, 0.0), -1 => (1.17, 0.22), _ => (0.93, 0.36) };
                return Math.Max(b * (phaseSamples - 1) / (double)m - c, 1.0);
            case StabilityStatistic.Totdev:
                return Compute(StabilityStatistic.Oadev, alpha, m, Math.Max(phaseSamples - 2 * m, 1), phaseSamples);
        }

        bool hadamard = statistic is StabilityStatistic.Hdev or StabilityStatistic.Ohdev;
        alpha = Math.Clamp(alpha, hadamard ? -4 : -2, 2);
        bool modified = statistic is StabilityStatistic.Mdev or StabilityStatistic.Tdev;
        bool onSamples = alpha != 1 && !(modified && m > DenseLimit);
        var filter = onSamples ? SampleFilter(statistic, m) : Filter(statistic, m);
        int g = onSamples ? 1 - alpha : 3 - alpha;
        bool discreteWhite = onSamples && alpha == 2;
        int stride = statistic is StabilityStatistic.Adev or StabilityStatistic.Hdev ? m : 1;
        var (lags, weights) = Autocorrelation(filter);
        int span = lags[^1];
        double R(long lag)
        {
            double r = 0;
            for (int i = 0; i < lags.Length; i++)
            {
                r += weights[i] * (discreteWhite ? (lag + lags[i] == 0 ? 1 : 0) : onSamples ? SampleKernel(lag + lags[i], g) : Kernel(lag + lags[i], g));
            }

            return r;
        }

        double r0 = R(0);
        bool logarithmic = !discreteWhite && g % 2 == 0;
        long reach = logarithmic ? 8L * span : span; // in samples
        long maxLag = Math.Min(terms - 1, reach / stride);
        double sum = terms * r0 * r0;
        if (maxLag <= MaxSampledLags)
        {
            for (long l = 1; l <= maxLag; l++)
            {
                double r = R(l * stride);
                sum += 2.0 * (terms - l) * r * r;
            }
        }
        else
        {
            // sum_{l=1}^{L} f(l) ~ integral_1^L f + (f(1) + f(L)) / 2 (trapezoid with its end correction), f(l) = (T - l) R(l)^2
            double F(double lag)
            {
                double r = R((long)Math.Round(lag) * stride);
                return (terms - lag) * r * r;
            }

            double step = (maxLag - 1) / (double)MaxSampledLags;
            double integral = 0;
            double previous = F(1);
            double first = previous;
            for (int k = 1; k <= MaxSampledLags; k++)
            {
                double current = F(1 + k * step);
                integral += 0.5 * (previous + current) * step;
                previous = current;
            }

            sum += 2.0 * (integral + 0.5 * (first + previous));
        }

        return Math.Max((double)terms * terms * r0 * r0 / sum, 1.0);
    }

    // The term's weights on integrated phase z: x_n = z_{n+1} - z_n turns a phase filter w into v_j = w_{j-1} - w_j.
    private static SortedDictionary<int, double> Filter(StabilityStatistic statistic, int m)
    {
        var v = new SortedDictionary<int, double>();
        void Add(int j, double value) => v[j] = (v.TryGetValue(j, out double old) ? old : 0) + value;
        void FromPhase(params (int At, double W)[] w)
        {
            foreach (var (at, weight) in w)
            {
                Add(at + 1, weight);
                Add(at, -weight);
            }
        }

        switch (statistic)
        {
            case StabilityStatistic.Adev or StabilityStatistic.Oadev:
                FromPhase((0, 1), (m, -2), (2 * m, 1));
                break;
            case StabilityStatistic.Hdev or StabilityStatistic.Ohdev:
                FromPhase((0, -1), (m, 3), (2 * m, -3), (3 * m, 1));
                break;
            default:
                // MDEV and TDEV: the sum over m second differences of x is the third difference of z at spacing m.
                Add(0, -1);
                Add(m, 3);
                Add(2 * m, -3);
                Add(3 * m, 1);
                break;
        }

        foreach (var zero in v.Where(p => p.Value == 0).Select(p => p.Key).ToArray())
        {
            v.Remove(zero);
        }

        return v;
    }

    // The term's weights on the phase samples themselves.
    private static SortedDictionary<int, double> SampleFilter(StabilityStatistic statistic, int m)
    {
        var w = new SortedDictionary<int, double>();
        void Add(int j, double value) => w[j] = (w.TryGetValue(j, out double old) ? old : 0) + value;
        switch (statistic)
        {
            case StabilityStatistic.Adev or StabilityStatistic.Oadev:
                Add(0, 1);
                Add(m, -2);
                Add(2 * m, 1);
                break;
            case StabilityStatistic.Hdev or StabilityStatistic.Ohdev:
                Add(0, -1);
                Add(m, 3);
                Add(2 * m, -3);
                Add(3 * m, 1);
                break;
            default:
                for (int i = 0; i < m; i++)
                {
                    Add(i, 1);
                    Add(i + m, -2);
                    Add(i + 2 * m, 1);
                }

                break;
        }

        return w;
    }

    // c_k = sum_j v_j v_{j+k} for every k that occurs, ascending.
    private static (int[] Lags, double[] Weights) Autocorrelation(SortedDictionary<int, double> v)
    {
        var c = new SortedDictionary<int, double>();
        foreach (var (j, a) in v)
        {
            foreach (var (i, b) in v)
            {
                int k = i - j;
                c[k] = (c.TryGetValue(k, out double old) ? old : 0) + a * b;
            }
        }

        return (c.Keys.ToArray(), c.Values.ToArray());
    }

    // At the samples, random-walk and random-run FM are taken as discrete sums of white noise (y a random walk), whose
    // generalized autocovariances are the polynomials below; they satisfy the second-difference recursion of summation
    // exactly (derived by hand: the second difference of |t|^3 - |t| is 6|t|, that of |t|^5 - 5|t|^3 + 4|t| is 20(|t|^3 - |t|)).
    private static double SampleKernel(long t, int g)
    {
        double a = Math.Abs((double)t);
        return g switch
        {
            3 => a * a * a - a,
            5 => -(Power(a, 5) - 5 * a * a * a + 4 * a),
            _ => Kernel(t, g),
        };
    }

    // Generalized autocovariance |t|^g (odd g) or t^g ln|t| (even g), signs alternating every two powers so that every
    // admissible filter gets a positive variance.
    private static double Kernel(long t, int g)
    {
        double a = Math.Abs((double)t);
        if (g % 2 == 1)
        {
            double sign = ((g + 1) / 2) % 2 == 0 ? 1 : -1;
            return sign * Power(a, g);
        }

        if (t == 0)
        {
            return 0;
        }

        double evenSign = (g / 2 + 1) % 2 == 0 ? 1 : -1;
        return evenSign * Power(a, g) * Math.Log(a);
    }

    // a^g by multiplication for a whole g >= 0 (the kernels are evaluated hundreds of thousands of times for a long run,
    // and Math.Pow was most of that cost).
    private static double Power(double a, int g)
    {
        if (g < 0)
        {
            return Math.Pow(a, g);
        }

        double p = 1;
        for (int k = 0; k < g; k++)
        {
            p *= a;
        }

        return p;
    }
}
