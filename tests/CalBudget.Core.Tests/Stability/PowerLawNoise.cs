namespace CalBudget.Core.Tests.Stability;

/// <summary>
/// Discrete power-law frequency noise by the method of N. J. Kasdin and T. Walter, "Discrete simulation of power law
/// noise" (1992 IEEE Frequency Control Symposium; also N. J. Kasdin, Proc. IEEE 83 (1995)): white deviates w filtered by
/// h_0 = 1, h_k = h_(k-1) (beta/2 + k - 1) / k, for S_y(f) proportional to f^-beta (alpha = -beta: 0 white FM, -1 flicker FM,
/// -2 random-walk FM), started from rest, so that every reading has expectation 0.
/// </summary>
internal sealed class PowerLawNoise
{
    private readonly double[] _h;
    private readonly Random _random;

    public PowerLawNoise(int alpha, int length, int seed)
    {
        Alpha = alpha;
        _h = Coefficients(-alpha, length);
        _random = new Random(seed);
    }

    public int Alpha { get; }

    /// <summary>The filter's coefficients h_0 .. h_(n-1).</summary>
    public static double[] Coefficients(double beta, int n)
    {
        var h = new double[n];
        h[0] = 1;
        for (int k = 1; k < n; k++)
        {
            h[k] = h[k - 1] * (beta / 2 + k - 1) / k;
        }

        return h;
    }

    /// <summary>
    /// The true standard deviation of the mean of n readings about their expectation, for unit white deviates:
    /// mean = (1/n) sum_j w_j H_(n-1-j) with H_i = h_0 + ... + h_i, so Var = sum_i H_i^2 / n^2 (derived from the filter).
    /// </summary>
    public double TrueRmsOfMean()
    {
        int n = _h.Length;
        double running = 0, sum = 0;
        for (int i = 0; i < n; i++)
        {
            running += _h[i];
            sum += running * running;
        }

        return Math.Sqrt(sum) / n;
    }

    /// <summary>One run: y_i = sum_(k &lt;= i) h_k w_(i-k).</summary>
    public double[] Next()
    {
        int n = _h.Length;
        var w = new double[n];
        for (int i = 0; i < n; i++)
        {
            w[i] = Normal();
        }

        if (Alpha == 0)
        {
            return w;
        }

        var y = new double[n];
        if (Alpha == -2)
        {
            double s = 0;
            for (int i = 0; i < n; i++)
            {
                s += w[i];
                y[i] = s;
            }

            return y;
        }

        for (int i = 0; i < n; i++)
        {
            double s = 0;
            for (int k = 0; k <= i; k++)
            {
                s += _h[k] * w[i - k];
            }

            y[i] = s;
        }

        return y;
    }

    private double Normal() => Math.Sqrt(-2 * Math.Log(1 - _random.NextDouble())) * Math.Cos(2 * Math.PI * _random.NextDouble());
}
