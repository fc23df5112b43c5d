using System.Buffers;
using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;

namespace CalBudget.Core.Stability;

/// <summary>
/// Readings prepared for the statistics: phase x_0..x_{N-1} (frequency data is integrated, x_{i+1} = x_i + y_i tau0),
/// with a linear trend removed so that the differences are taken between small numbers (a linear phase term is annihilated
/// exactly by every difference used, so this changes no statistic, only the rounding). Gaps (NaN readings) are kept as a
/// prefix count, so that "does this term's span contain a gap?" costs O(1). The samples live in a pooled buffer until the
/// series is disposed.
/// </summary>
internal sealed class PhaseSeries : IDisposable
{
    private readonly int[]? _gapsBefore; // _gapsBefore[k] = gaps among the first k readings (frequency: y, phase: x)
    private double[]? _x;

    private PhaseSeries(double[] x, int length, double tau0, StabilityDataType type, int[]? gapsBefore, int gapCount)
    {
        _x = x;
        Length = length;
        Tau0 = tau0;
        DataType = type;
        _gapsBefore = gapsBefore;
        GapCount = gapCount;
    }

    /// <summary>Phase samples, detrended; 0 where a gap makes the value unknown (such samples are never used).</summary>
    public ReadOnlySpan<double> X => (_x ?? throw new ObjectDisposedException(nameof(PhaseSeries))).AsSpan(0, Length);

    /// <summary>Phase sample count N.</summary>
    public int Length { get; }

    /// <summary>The sampling interval in seconds.</summary>
    public double Tau0 { get; }

    /// <summary>The kind of the original readings.</summary>
    public StabilityDataType DataType { get; }

    /// <summary>How many readings are gaps.</summary>
    public int GapCount { get; }

    public static PhaseSeries From(ReadOnlySpan<double> values, StabilityDataType type, double tau0)
    {
        var (gaps, sum) = Survey(values);
        int[]? before = null;
        if (gaps > 0)
        {
            before = new int[values.Length + 1];
            for (int i = 0; i < values.Length; i++)
            {
                before[i + 1] = before[i] + (double.IsNaN(values[i]) ? 1 : 0);
            }
        }

        int length = type == StabilityDataType.Frequency ? values.Length + 1 : values.Length;
        double[] x = ArrayPool<double>.Shared.Rent(length);
        if (type == StabilityDataType.Frequency)
        {
            int count = values.Length - gaps;
            Integrate(values, count > 0 ? sum / count : 0, tau0, x);
        }
        else
        {
            int first = 0, last = values.Length - 1;
            while (first < values.Length && double.IsNaN(values[first]))
            {
                first++;
            }

            while (last >= 0 && double.IsNaN(values[last]))
            {
                last--;
            }

            first = first < values.Length ? first : -1;
            double x0 = first >= 0 ? values[first] : 0;
            double slope = last > first ? (values[last] - x0) / (last - first) : 0;
            for (int i = 0; i < values.Length; i++)
            {
                x[i] = double.IsNaN(values[i]) ? 0 : values[i] - x0 - slope * (i - first);
            }
        }

        return new PhaseSeries(x, length, tau0, type, before, gaps);
    }

    // The number of gaps among the readings and the sum of the others, in one pass.
    private static (int Gaps, double Sum) Survey(ReadOnlySpan<double> values)
    {
        int i = 0;
        double sum = 0;
        long gaps = 0;
        if (Vector256.IsHardwareAccelerated && values.Length >= 4)
        {
            ref double origin = ref MemoryMarshal.GetReference(values);
            var sums = Vector256<double>.Zero;
            var nans = Vector256<long>.Zero;
            for (; i <= values.Length - 4; i += 4)
            {
                var v = Vector256.LoadUnsafe(ref origin, (nuint)i);
                var number = Vector256.Equals(v, v); // all ones where v is not NaN
                sums += v & number;
                nans += Vector256<long>.One + number.AsInt64();
            }

            sum = Vector256.Sum(sums);
            gaps = Vector256.Sum(nans);
        }

        for (; i < values.Length; i++)
        {
            if (double.IsNaN(values[i]))
            {
                gaps++;
            }
            else
            {
                sum += values[i];
            }
        }

        return ((int)gaps, sum);
    }

    // x[0] = 0, x[i + 1] = x[i] + (y[i] - mean) tau0, a gap adding nothing. Four at a time: the running sums within the
    // four lanes, then the carry from the lanes before, so that one addition per four samples lies on the serial path.
    private static void Integrate(ReadOnlySpan<double> y, double mean, double tau0, double[] x)
    {
        x[0] = 0;
        int i = 0;
        double carried = 0;
        if (Vector256.IsHardwareAccelerated && y.Length >= 4)
        {
            ref double origin = ref MemoryMarshal.GetReference(y);
            ref double target = ref MemoryMarshal.GetArrayDataReference(x);
            var m = Vector256.Create(mean);
            var t = Vector256.Create(tau0);
            var carry = Vector256<double>.Zero;
            for (; i <= y.Length - 4; i += 4)
            {
                var v = Vector256.LoadUnsafe(ref origin, (nuint)i);
                var step = (v - m) * t & Vector256.Equals(v, v);
                var prefix = Lanes.RunningSum(step);
                (carry + prefix).StoreUnsafe(ref target, (nuint)(i + 1));
                carry += Lanes.Last(prefix);
            }

            carried = carry.GetElement(0);
        }

        for (; i < y.Length; i++)
        {
            carried += double.IsNaN(y[i]) ? 0 : (y[i] - mean) * tau0;
            x[i + 1] = carried;
        }
    }

    /// <summary>Gives the samples' buffer back.</summary>
    public void Dispose()
    {
        if (_x is { } x)
        {
            _x = null;
            ArrayPool<double>.Shared.Return(x);
        }
    }

    /// <summary>True when the term that uses phase samples first..last (inclusive) has no gap in its span.</summary>
    public bool Complete(int first, int last)
    {
        if (_gapsBefore is null)
        {
            return true;
        }

        // Frequency reading i lies between phase samples i and i + 1; phase reading i is sample i.
        return DataType == StabilityDataType.Frequency
            ? _gapsBefore[last] - _gapsBefore[first] == 0
            : _gapsBefore[last + 1] - _gapsBefore[first] == 0;
    }

    /// <summary>The original readings' count as the data type counts them (frequency: N - 1).</summary>
    public int ReadingCount => DataType == StabilityDataType.Frequency ? Length - 1 : Length;
}
