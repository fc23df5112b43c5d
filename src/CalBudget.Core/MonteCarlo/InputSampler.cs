using CalBudget.Core.Gum;
using MathNet.Numerics.Distributions;

namespace CalBudget.Core.MonteCarlo;

/// <summary>
/// Draws the deviation X_i - x_i of one input, scaled by its sensitivity, and adds it to a block of output trials.
/// Each kind has a direct method that needs no special function on most draws:
/// normal by ziggurat; rectangular a(2U - 1); triangular a(U1 + U2 - 1); U-shaped a cos(2 theta) from a point
/// uniform in the unit disc; Student's t by Bailey's polar method (R. W. Bailey, Math. Comp. 62, 1994).
/// </summary>
internal static class InputSampler
{
    public static void AddIndependent(ref Xoshiro256 rng, InputDistribution d, double sensitivity, Span<double> output)
    {
        switch (d.Kind)
        {
            case DistributionKind.Normal:
                {
                    double s = sensitivity * d.StandardUncertainty;
                    for (int j = 0; j < output.Length; j++)
                    {
                        output[j] += s * Ziggurat.Next(ref rng);
                    }

                    break;
                }

            case DistributionKind.Rectangular:
                {
                    double s = sensitivity * d.HalfWidth;
                    for (int j = 0; j < output.Length; j++)
                    {
                        output[j] += s * rng.NextSigned();
                    }

                    break;
                }

            case DistributionKind.Triangular:
                {
                    double s = sensitivity * d.HalfWidth;
                    for (int j = 0; j < output.Length; j++)
                    {
                        output[j] += s * (rng.NextDouble() + rng.NextDouble() - 1.0);
                    }

                    break;
                }

            case DistributionKind.UShaped:
                {
                    double s = sensitivity * d.HalfWidth;
                    for (int j = 0; j < output.Length; j++)
                    {
                        double u, v, w;
                        do
                        {
                            u = rng.NextSigned();
                            v = rng.NextSigned();
                            w = u * u + v * v;
                        }
                        while (w >= 1.0 || w == 0.0);
                        output[j] += s * (u * u - v * v) / w;
                    }

                    break;
                }

            case DistributionKind.StudentT:
                {
                    double s = sensitivity * d.StandardUncertainty;
                    double nu = d.ShapeDegreesOfFreedom;
                    double exponent = -2.0 / nu;
                    for (int j = 0; j < output.Length; j++)
                    {
                        double u, v, w;
                        do
                        {
                            u = rng.NextSigned();
                            v = rng.NextSigned();
                            w = u * u + v * v;
                        }
                        while (w >= 1.0 || w == 0.0);
                        output[j] += s * u * Math.Sqrt(nu * (Math.Exp(exponent * Math.Log(w)) - 1.0) / w);
                    }

                    break;
                }

            default:
                throw new InvalidOperationException($"No sampler for {d.Kind}.");
        }
    }
}

/// <summary>
/// Maps a standard normal deviate z to the deviation of a non-normal input with the same probability, F^-1(Phi(z)),
/// by linear interpolation in a table over |z| &lt;= 8 (beyond it, probability 1.2e-15, the end value is used).
/// This is the marginal step of the Gaussian copula used for correlated inputs.
/// </summary>
internal sealed class CopulaMarginal
{
    private const double ZMax = 8.0;
    private const int Nodes = 2049; // odd, so that z = 0 is a node and the table is mirrored about it
    private readonly double[] _table;
    private readonly double _step;

    public CopulaMarginal(InputDistribution d, double sensitivity)
    {
        _table = new double[Nodes];
        _step = 2 * ZMax / (Nodes - 1);
        int mid = Nodes / 2;
        for (int n = mid; n < Nodes; n++)
        {
            double magnitude = sensitivity * UpperQuantile(d, (n - mid) * _step);
            _table[n] = magnitude;
            _table[Nodes - 1 - n] = -magnitude; // every input distribution here is symmetric
        }
    }

    public double Map(double z)
    {
        double pos = (z + ZMax) / _step;
        if (!(pos > 0))
        {
            return _table[0];
        }

        if (pos >= Nodes - 1)
        {
            return _table[Nodes - 1];
        }

        int n = (int)pos;
        double f = pos - n;
        return _table[n] + f * (_table[n + 1] - _table[n]);
    }

    // F^-1(Phi(z)) for z >= 0, from the upper tail probability so that the far tail keeps its precision.
    private static double UpperQuantile(InputDistribution d, double z)
    {
        double tail = Normal.CDF(0, 1, -z);
        double a = d.HalfWidth;
        return d.Kind switch
        {
            DistributionKind.Rectangular => a * (1 - 2 * tail),
            DistributionKind.Triangular => a * (1 - Math.Sqrt(2 * tail)),
            DistributionKind.UShaped => a * Math.Cos(Math.PI * tail),
            DistributionKind.StudentT => z == 0 ? 0 : d.StandardUncertainty * CoverageFactor.StudentQuantile(d.ShapeDegreesOfFreedom, 1 - tail),
            _ => d.StandardUncertainty * z,
        };
    }
}
