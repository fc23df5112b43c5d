using System.Numerics;
using System.Runtime.CompilerServices;

namespace CalBudget.Core.MonteCarlo;

/// <summary>
/// xoshiro256** pseudo-random generator (D. Blackman and S. Vigna, 2018): period 2^256 - 1, all 64 output bits of
/// good quality, a few nanoseconds a draw. Each (seed, stream, chunk) triple gets its own state through SplitMix64,
/// so parallel work is reproducible whatever the number of threads.
/// </summary>
internal struct Xoshiro256
{
    private ulong _s0, _s1, _s2, _s3;

    public static Xoshiro256 ForChunk(ulong seed, long stream, long chunk) =>
        FromSeed(seed ^ unchecked((ulong)stream * 0xD1B54A32D192ED03UL) ^ unchecked((ulong)chunk * 0x9E3779B97F4A7C15UL));

    /// <summary>A generator whose state is four SplitMix64 outputs from <paramref name="x"/>.</summary>
    public static Xoshiro256 FromSeed(ulong x)
    {
        var g = default(Xoshiro256);
        g._s0 = SplitMix(ref x);
        g._s1 = SplitMix(ref x);
        g._s2 = SplitMix(ref x);
        g._s3 = SplitMix(ref x);
        if ((g._s0 | g._s1 | g._s2 | g._s3) == 0)
        {
            g._s0 = 1; // the one state the generator must never be in
        }

        return g;
    }

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public ulong NextUInt64()
    {
        ulong result = BitOperations.RotateLeft(_s1 * 5, 7) * 9;
        ulong t = _s1 << 17;
        _s2 ^= _s0;
        _s3 ^= _s1;
        _s1 ^= _s2;
        _s0 ^= _s3;
        _s2 ^= t;
        _s3 = BitOperations.RotateLeft(_s3, 45);
        return result;
    }

    /// <summary>Uniform on [0, 1) with 53 random bits.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public double NextDouble() => (long)(NextUInt64() >> 11) * (1.0 / (1UL << 53)); // signed: one conversion instruction

    /// <summary>Uniform on (0, 1): never 0, so its logarithm is finite.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public double NextOpenDouble() => ((long)(NextUInt64() >> 12) + 0.5) * (1.0 / (1UL << 52));

    /// <summary>Uniform on (-1, 1).</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public double NextSigned() => ((long)NextUInt64() >> 11) * (1.0 / (1UL << 52));

    private static ulong SplitMix(ref ulong x)
    {
        ulong z = x += 0x9E3779B97F4A7C15UL;
        z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9UL;
        z = (z ^ (z >> 27)) * 0x94D049BB133111EBUL;
        return z ^ (z >> 31);
    }
}
