using System.Globalization;
using System.Numerics;

namespace CalBudget.Api.Analytics;

/// <summary>
/// Reads a JSON number into the nearest double, as <see cref="double.Parse(string)"/> does, several times faster: a decimal
/// significand of up to 19 digits and its exponent are read as integers and converted by the Eisel-Lemire method (D. Lemire,
/// "Number parsing at a gigabyte per second", Software: Practice and Experience 51, 2021) with a 128-bit table of powers of
/// five computed at start. Whatever that method cannot settle (more digits, a possible tie, subnormal or overflowing
/// results) goes to <see cref="double.TryParse(ReadOnlySpan{byte}, NumberStyles, IFormatProvider, out double)"/>.
/// </summary>
public static class FastDouble
{
    private const int SmallestPower = -342;
    private const int LargestPower = 308;

    // For each q: the 128 most significant bits of 5^q (q >= 0) or of a rounded-up 2^b / 5^-q (q < 0), high word first.
    private static readonly ulong[] PowersOfFive = BuildTable();

    /// <summary>The double nearest to the JSON number <paramref name="text"/> (already checked to be one).</summary>
    public static bool TryParse(ReadOnlySpan<byte> text, out double value)
    {
        int i = 0;
        bool negative = text[0] == (byte)'-';
        if (negative)
        {
            i++;
        }

        ulong w = 0;
        int digits = 0;
        int exponent = 0;
        while (i < text.Length && (uint)(text[i] - '0') <= 9)
        {
            if (w != 0 || text[i] != (byte)'0')
            {
                digits++;
            }

            w = w * 10 + (uint)(text[i] - '0');
            i++;
        }

        if (i < text.Length && text[i] == (byte)'.')
        {
            i++;
            while (i < text.Length && (uint)(text[i] - '0') <= 9)
            {
                if (w != 0 || text[i] != (byte)'0')
                {
                    digits++;
                }

                w = w * 10 + (uint)(text[i] - '0');
                exponent--;
                i++;
            }
        }

        if (i < text.Length && (text[i] | 0x20) == (byte)'e')
        {
            i++;
            bool negativeExponent = text[i] == (byte)'-';
            if (text[i] is (byte)'-' or (byte)'+')
            {
                i++;
            }

            int e = 0;
            while (i < text.Length && (uint)(text[i] - '0') <= 9)
            {
                if (e < 100_000)
                {
                    e = e * 10 + (text[i] - '0');
                }

                i++;
            }

            exponent += negativeExponent ? -e : e;
        }

        if (digits <= 19 && TryEiselLemire(w, exponent, out value))
        {
            if (negative)
            {
                value = -value;
            }

            return true;
        }

        return double.TryParse(text, NumberStyles.Float, CultureInfo.InvariantCulture, out value);
    }

    private static bool TryEiselLemire(ulong w, int q, out double value)
    {
        value = 0;
        if (w == 0)
        {
            return true;
        }

        if (q < SmallestPower || q > LargestPower)
        {
            return false;
        }

        int lz = BitOperations.LeadingZeroCount(w);
        w <<= lz;
        int index = 2 * (q - SmallestPower);
        ulong high = Math.BigMul(w, PowersOfFive[index], out ulong low);
        if ((high & 0x1FF) == 0x1FF)
        {
            ulong secondHigh = Math.BigMul(w, PowersOfFive[index + 1], out _);
            low += secondHigh;
            if (secondHigh > low)
            {
                high++;
            }

            if (low == ulong.MaxValue && (q < -27 || q > 55))
            {
                return false;
            }
        }

        int upper = (int)(high >> 63);
        int shift = upper + 64 - 52 - 3;
        ulong mantissa = high >> shift;
        int power2 = (int)(((152170 + 65536) * (long)q) >> 16) + 63 + upper - lz + 1023;
        if (power2 <= 0 || power2 >= 0x7FF - 1)
        {
            return false; // subnormal or near overflow: the slow path
        }

        if (low <= 1 && (mantissa & 3) == 1 && (mantissa << shift) == high)
        {
            return false; // possibly exactly half way between two doubles: the slow path decides the tie
        }

        mantissa += mantissa & 1;
        mantissa >>= 1;
        if (mantissa >= 2UL << 52)
        {
            mantissa = 1UL << 52;
            power2++;
        }

        mantissa &= ~(1UL << 52);
        if (power2 >= 0x7FF)
        {
            return false;
        }

        value = BitConverter.UInt64BitsToDouble(mantissa | ((ulong)power2 << 52));
        return true;
    }

    private static ulong[] BuildTable()
    {
        var table = new ulong[2 * (LargestPower - SmallestPower + 1)];
        var two128 = BigInteger.One << 128;
        for (int q = SmallestPower; q <= LargestPower; q++)
        {
            BigInteger c;
            if (q >= 0)
            {
                c = BigInteger.Pow(5, q);
                while (c < BigInteger.One << 127)
                {
                    c <<= 1;
                }

                while (c >= two128)
                {
                    c >>= 1;
                }
            }
            else
            {
                var power5 = BigInteger.Pow(5, -q);
                int z = (int)power5.GetBitLength();
                if (BigInteger.One << (z - 1) == power5)
                {
                    z--;
                }

                int b = q >= -27 ? z + 127 : 2 * z + 2 * 64;
                c = (BigInteger.One << b) / power5 + 1;
                while (c >= two128)
                {
                    c >>= 1;
                }
            }

            int at = 2 * (q - SmallestPower);
            table[at] = (ulong)(c >> 64);
            table[at + 1] = (ulong)(c & ulong.MaxValue);
        }

        return table;
    }
}
