using CalBudget.Core.Gum;
using MathNet.Numerics.Distributions;

namespace CalBudget.Core.MonteCarlo;

/// <summary>
/// Draws the deviation X_i - x_i of one input, scaled by its sensitivity, and adds it to a block of output trials.
/// Each kind has an exact method that needs no special function on most draws:
/// normal by ziggurat; rectangular a(2U - 1); triangular a(U1 + U2 - 1) from the two 32-bit halves of one draw;
/// U-shaped a sin(pi (U - 1/2)) with sin as its Taylor polynomial to the 17th power (error below 5e-14 on the range);
/// Student's t as Z sqrt(nu / X) with X chi-squared, 2 Gamma(nu / 2) by Marsaglia and Tsang's method
/// (ACM TOMS 26, 2000), boosted by U^(1/a) for shape a &lt; 1.
/// </summary>
internal static class InputSampler
{
    // sin(x) for |x| <= pi/2 by its Taylor polynomial through x^17 (the first omitted term is below 4.4e-14).
    [System.Runtime.CompilerServices.MethodImpl(System.Runtime.CompilerServices.MethodImplOptions.AggressiveInlining)]
    internal static double SinHalfPiRange(double x)
    {
        double x2 = x * x;
        double p = 1.0 / 355687428096000.0;           // 1/17!
        p = p * x2 - 1.0 / 1307674368000.0;           // 1/15!
        p = p * x2 + 1.0 / 6227020800.0;              // 1/13!
        p = p * x2 - 1.0 / 39916800.0;                // 1/11!
        p = p * x2 + 1.0 / 362880.0;                  // 1/9!
        p = p * x2 - 1.0 / 5040.0;                    // 1/7!
        p = p * x2 + 1.0 / 120.0;                     // 1/5!
        p = p * x2 - 1.0 / 6.0;                       // 1/3!
        p = p * x2 + 1.0;
        return x * p;
    }

    public static void AddIndependent(ref Xoshiro256 state, InputDistribution d, double sensitivity, Span<double> output)
    {
        // Each loop takes the generator by value and hands it back: a by-value copy can live in registers, whereas
        // through a ref every draw would read and write its state in memory (seen in the JIT's output; about 2x slower).
        state = d.Kind switch
        {
            DistributionKind.Normal => Normal(state, sensitivity * d.StandardUncertainty, output),
            DistributionKind.Rectangular => Rectangular(state, sensitivity * d.HalfWidth, output),
            DistributionKind.Triangular => Triangular(state, sensitivity * d.HalfWidth, output),
            DistributionKind.UShaped => UShaped(state, sensitivity * d.HalfWidth, output),
            DistributionKind.StudentT => StudentT(state, sensitivity * d.StandardUncertainty, d.ShapeDegreesOfFreedom, output),
            DistributionKind.Orientation => Orientation(state, sensitivity, d, output),
            _ => throw new InvalidOperationException($"No sampler for {d.Kind}."),
        };
    }

    private static Xoshiro256 Normal(Xoshiro256 rng, double s, Span<double> output)
    {
        for (int j = 0; j < output.Length; j++)
        {
            output[j] += s * Ziggurat.Next(ref rng);
        }

        return rng;
    }

    private static Xoshiro256 Rectangular(Xoshiro256 rng, double s, Span<double> output)
    {
        for (int j = 0; j < output.Length; j++)
        {
            output[j] += s * rng.NextSigned();
        }

        return rng;
    }

    private static Xoshiro256 Triangular(Xoshiro256 rng, double s, Span<double> output)
    {
        const double Scale = 1.0 / 4294967296.0;
        for (int j = 0; j < output.Length; j++)
        {
            ulong bits = rng.NextUInt64();
            output[j] += s * (((long)(bits >> 32) + (long)(uint)bits + 1.0) * Scale - 1.0);
        }

        return rng;
    }

    private static Xoshiro256 UShaped(Xoshiro256 rng, double s, Span<double> output)
    {
        for (int j = 0; j < output.Length; j++)
        {
            output[j] += s * SinHalfPiRange(Math.PI * (rng.NextDouble() - 0.5));
        }

        return rng;
    }

    // A posture uniform in the cap: t = cos(angle) uniform on [cos theta, 1], azimuth uniform; the deviation of
    // a (t - 1) + b sqrt(1 - t^2) cos(phi) from its mean.
    private static Xoshiro256 Orientation(Xoshiro256 rng, double sensitivity, InputDistribution d, Span<double> output)
    {
        var (a, b, cosTheta) = d.Geometry;
        double mean = d.MeanShift;
        for (int j = 0; j < output.Length; j++)
        {
            double t = 1 - rng.NextDouble() * (1 - cosTheta);
            double phi = 2 * Math.PI * rng.NextDouble();
            double shift = a * (t - 1) + b * Math.Sqrt(Math.Max(0, 1 - t * t)) * Math.Cos(phi);
            output[j] += sensitivity * (shift - mean);
        }

        return rng;
    }

    private static Xoshiro256 StudentT(Xoshiro256 rng, double s, double nu, Span<double> output)
    {
        var gamma = new GammaSampler(0.5 * nu);
        double halfNu = 0.5 * nu;
        for (int j = 0; j < output.Length; j++)
        {
            double z = Ziggurat.Next(ref rng);
            // chi-squared(nu) = 2 Gamma(nu/2), so sqrt(nu / chi2) = sqrt((nu/2) / Gamma(nu/2))
            output[j] += s * z * Math.Sqrt(halfNu / gamma.Next(ref rng));
        }

        return rng;
    }
}

/// <summary>Gamma(a, 1) deviates by Marsaglia and Tsang's squeeze method (ACM TOMS 26, 2000), for any shape a &gt; 0.</summary>
internal readonly struct GammaSampler
{
    private readonly double _d;
    private readonly double _c;
    private readonly double _boost; // 1/a when a < 1 (Gamma(a) = Gamma(a + 1) U^(1/a)), else 0

    public GammaSampler(double shape)
    {
        double a = shape < 1 ? shape + 1 : shape;
        _d = a - 1.0 / 3.0;
        _c = 1.0 / Math.Sqrt(9.0 * _d);
        _boost = shape < 1 ? 1.0 / shape : 0;
    }

    [System.Runtime.CompilerServices.MethodImpl(System.Runtime.CompilerServices.MethodImplOptions.AggressiveInlining)]
    public double Next(ref Xoshiro256 rng)
    {
        double g;
        while (true)
        {
            double x = Ziggurat.Next(ref rng);
            double v = 1.0 + _c * x;
            if (v <= 0)
            {
                continue;
            }

            v = v * v * v;
            double u = rng.NextOpenDouble();
            double x2 = x * x;
            if (u < 1.0 - 0.0331 * x2 * x2 || Math.Log(u) < 0.5 * x2 + _d * (1.0 - v + Math.Log(v)))
            {
                g = _d * v;
                break;
            }
        }

        return _boost == 0 ? g : g * Math.Exp(Math.Log(rng.NextOpenDouble()) * _boost);
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
