using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;

namespace CalBudget.Core.MonteCarlo;

/// <summary>
/// Standard normal deviates by the ziggurat method with 128 layers (G. Marsaglia and W. W. Tsang, 2000, in the form of
/// J. A. Doornik, "An improved ziggurat method to generate normal random samples", 2005): about 98.8 % of draws cost
/// one random word and one comparison; the tail beyond R uses Marsaglia's exact exponential method.
/// </summary>
internal static class Ziggurat
{
    private const int Layers = 128;
    private const double R = 3.442619855899;
    private const double V = 9.91256303526217e-3;
    private static readonly double[] X = BuildX();
    private static readonly double[] Ratio = BuildRatio();

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static double Next(ref Xoshiro256 rng)
    {
        while (true)
        {
            ulong bits = rng.NextUInt64();
            int i = (int)(bits & (Layers - 1));
            double u = ((long)bits >> 11) * (1.0 / (1UL << 52)); // (-1, 1), independent of the layer bits
            // i < 128 by the mask and both tables are longer, so the bounds checks can go
            if (Math.Abs(u) < Unsafe.Add(ref MemoryMarshal.GetArrayDataReference(Ratio), i))
            {
                return u * Unsafe.Add(ref MemoryMarshal.GetArrayDataReference(X), i);
            }

            // The rare path takes and returns the generator by value, so that the hot path's state can stay in registers.
            (double z, rng) = Slow(rng, i, u);
            if (!double.IsNaN(z))
            {
                return z;
            }
        }
    }

    [MethodImpl(MethodImplOptions.NoInlining)]
    private static (double Z, Xoshiro256 Rng) Slow(Xoshiro256 rng, int i, double u)
    {
        if (i == 0)
        {
            double x, y;
            do
            {
                x = -Math.Log(rng.NextOpenDouble()) / R;
                y = -Math.Log(rng.NextOpenDouble());
            }
            while (y + y < x * x);
            return (u < 0 ? -(R + x) : R + x, rng);
        }

        double xi = u * X[i];
        double f0 = Math.Exp(-0.5 * (X[i] * X[i] - xi * xi));
        double f1 = Math.Exp(-0.5 * (X[i + 1] * X[i + 1] - xi * xi));
        return (f1 + rng.NextDouble() * (f0 - f1) < 1.0 ? xi : double.NaN, rng);
    }

    private static double[] BuildX()
    {
        var x = new double[Layers + 1];
        double f = Math.Exp(-0.5 * R * R);
        x[0] = V / f;
        x[1] = R;
        for (int i = 2; i < Layers; i++)
        {
            x[i] = Math.Sqrt(-2 * Math.Log(V / x[i - 1] + f));
            f = Math.Exp(-0.5 * x[i] * x[i]);
        }

        x[Layers] = 0;
        return x;
    }

    private static double[] BuildRatio()
    {
        var r = new double[Layers];
        for (int i = 0; i < Layers; i++)
        {
            r[i] = X[i + 1] / X[i];
        }

        return r;
    }
}
