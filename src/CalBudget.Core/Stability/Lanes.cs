using System.Runtime.CompilerServices;
using System.Runtime.Intrinsics;

namespace CalBudget.Core.Stability;

/// <summary>Steps of the running sums that the phase integration and the shared difference pass take four lanes at a time.</summary>
internal static class Lanes
{
    /// <summary>The running sums within the lanes: (a, a + b, a + b + c, a + b + c + d) of (a, b, c, d).</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector256<double> RunningSum(Vector256<double> v)
    {
        var prefix = v + (Vector256.Shuffle(v, Vector256.Create(0L, 0, 1, 2)) & Vector256.Create(0, -1L, -1L, -1L).AsDouble());
        return prefix + (Vector256.Shuffle(prefix, Vector256.Create(0L, 0, 0, 1)) & Vector256.Create(0, 0, -1L, -1L).AsDouble());
    }

    /// <summary>The last lane in every lane: what a running sum carries on to the next four.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector256<double> Last(Vector256<double> v) => Vector256.Shuffle(v, Vector256.Create(3L, 3, 3, 3));
}
