using System.Buffers.Binary;

namespace CalBudget.Data.Calibrations;

/// <summary>
/// The stored form of a block of readings: one little-endian array per column (int64 ticks, float64 values, NaN for a
/// reading without a frequency or gate time; a column no reading of the block has is absent).
/// </summary>
public static class ReadingBlock
{
    /// <summary>Readings per block.</summary>
    public const int Capacity = 4096;

    /// <summary>The columns of <paramref name="rows"/>.</summary>
    [System.Runtime.CompilerServices.MethodImpl(System.Runtime.CompilerServices.MethodImplOptions.AggressiveOptimization)]
    public static (byte[] Ticks, byte[] Offsets, byte[]? Frequencies, byte[]? Gates) Encode(ReadOnlySpan<Reading> rows)
    {
        byte[] ticks = new byte[rows.Length * 8];
        byte[] offsets = new byte[rows.Length * 8];
        byte[]? frequencies = null;
        byte[]? gates = null;
        for (int i = 0; i < rows.Length; i++)
        {
            var r = rows[i];
            BinaryPrimitives.WriteInt64LittleEndian(ticks.AsSpan(8 * i), r.AtTicks);
            BinaryPrimitives.WriteDoubleLittleEndian(offsets.AsSpan(8 * i), r.FractionalOffset);
            if (r.FrequencyHz is double f)
            {
                frequencies ??= NaNs(rows.Length);
                BinaryPrimitives.WriteDoubleLittleEndian(frequencies.AsSpan(8 * i), f);
            }

            if (r.GateTimeSeconds is double g)
            {
                gates ??= NaNs(rows.Length);
                BinaryPrimitives.WriteDoubleLittleEndian(gates.AsSpan(8 * i), g);
            }
        }

        return (ticks, offsets, frequencies, gates);
    }

    /// <summary>The readings of a stored block.</summary>
    public static Reading[] Decode(int count, byte[] ticks, byte[] offsets, byte[]? frequencies, byte[]? gates)
    {
        ArgumentNullException.ThrowIfNull(ticks);
        ArgumentNullException.ThrowIfNull(offsets);
        if (ticks.Length != 8 * count || offsets.Length != 8 * count || frequencies is { } fb && fb.Length != 8 * count || gates is { } gb && gb.Length != 8 * count)
        {
            throw new InvalidDataException("A stored block of readings has columns of the wrong length.");
        }

        var result = new Reading[count];
        for (int i = 0; i < count; i++)
        {
            result[i] = new Reading(BinaryPrimitives.ReadInt64LittleEndian(ticks.AsSpan(8 * i)), BinaryPrimitives.ReadDoubleLittleEndian(offsets.AsSpan(8 * i)),
                Optional(frequencies, i), Optional(gates, i));
        }

        return result;
    }

    private static double? Optional(byte[]? column, int i)
    {
        if (column is null)
        {
            return null;
        }

        double v = BinaryPrimitives.ReadDoubleLittleEndian(column.AsSpan(8 * i));
        return double.IsNaN(v) ? null : v;
    }

    private static byte[] NaNs(int count)
    {
        byte[] column = new byte[count * 8];
        for (int i = 0; i < count; i++)
        {
            BinaryPrimitives.WriteDoubleLittleEndian(column.AsSpan(8 * i), double.NaN);
        }

        return column;
    }
}
