using System.Buffers;

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

    /// <summary>The mean of the readings that are not gaps (0 when all are), and how many there are.</summary>
    public static (double Mean, int Count) MeanOfReadings(ReadOnlySpan<double> values)
    {
        double sum = 0;
        int count = 0;
        foreach (double v in values)
        {
            if (!double.IsNaN(v))
            {
                sum += v;
                count++;
            }
        }

        return (count > 0 ? sum / count : 0, count);
    }

    public static PhaseSeries From(ReadOnlySpan<double> values, StabilityDataType type, double tau0)
    {
        int gaps = 0;
        foreach (double v in values)
        {
            if (double.IsNaN(v))
            {
                gaps++;
            }
        }

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
            double mean = MeanOfReadings(values).Mean;
            x[0] = 0;
            for (int i = 0; i < values.Length; i++)
            {
                x[i + 1] = x[i] + (double.IsNaN(values[i]) ? 0 : (values[i] - mean) * tau0);
            }
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
