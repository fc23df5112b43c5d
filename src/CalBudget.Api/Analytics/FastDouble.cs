using System.Buffers.Binary;
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

    /// <summary>The double nearest to <paramref name="text"/>, which must be one JSON number and nothing else.</summary>
    public static bool TryParse(ReadOnlySpan<byte> text, out double value) => Read(text, 0, out value) == text.Length;

    /// <summary>
    /// Reads the JSON number (RFC 8259 section 6) that starts at <paramref name="at"/> into the nearest double, checking its
    /// grammar as it goes; the index just after it, or -1 when no JSON number starts there. Eight digits at a time are
    /// converted together (the technique of the paper above).
    /// </summary>
    public static int Read(ReadOnlySpan<byte> text, int at, out double value)
    {
        value = 0;
        int i = at;
        bool negative = i < text.Length && text[i] == (byte)'-';
        if (negative)
        {
            i++;
        }

        if (i >= text.Length || !IsDigit(text[i]))
        {
            return -1;
        }

        int digitsFrom = i;
        ulong w = 0;
        if (text[i] == (byte)'0')
        {
            i++;
        }
        else
        {
            i = Digits(text, i, ref w);
        }

        int digits = i - digitsFrom;
        int exponent = 0;
        if (i < text.Length && text[i] == (byte)'.')
        {
            int fractionFrom = ++i;
            i = Digits(text, i, ref w);
            if (i == fractionFrom)
            {
                return -1;
            }

            exponent = fractionFrom - i;
            digits += i - fractionFrom;
        }

        int end = i;
        if (i < text.Length && (text[i] | 0x20) == (byte)'e')
        {
            i++;
            bool negativeExponent = i < text.Length && text[i] == (byte)'-';
            if (i < text.Length && text[i] is (byte)'-' or (byte)'+')
            {
                i++;
            }

            int exponentFrom = i;
            int e = 0;
            while (i < text.Length && IsDigit(text[i]))
            {
                if (e < 100_000)
                {
                    e = e * 10 + (text[i] - '0');
                }

                i++;
            }

            if (i == exponentFrom)
            {
                return -1;
            }

            exponent += negativeExponent ? -e : e;
        }

        // more than 19 digits may still be few significant ones after the leading zeros of 0.000...
        if (digits > 19)
        {
            for (int k = digitsFrom; k < end && text[k] is (byte)'0' or (byte)'.'; k++)
            {
                digits -= text[k] == (byte)'0' ? 1 : 0;
            }
        }

        if (digits <= 19 && TryEiselLemire(w, exponent, out value))
        {
            value = negative ? -value : value;
            return i;
        }

        return double.TryParse(text[at..i], NumberStyles.Float, CultureInfo.InvariantCulture, out value) ? i : -1;
    }

    // Decimal digits from i into w (w * 10 + d each; past 19 digits w is not used), eight at a time while eight are there.
    private static int Digits(ReadOnlySpan<byte> text, int i, ref ulong w)
    {
        while (i + 8 <= text.Length)
        {
            ulong chunk = BinaryPrimitives.ReadUInt64LittleEndian(text[i..]);
            if (!AllDigits(chunk))
            {
                break;
            }

            w = unchecked(w * 100_000_000 + EightDigits(chunk));
            i += 8;
        }

        while (i < text.Length && IsDigit(text[i]))
        {
            w = unchecked(w * 10 + (uint)(text[i] - '0'));
            i++;
        }

        return i;
    }

    // True when all eight bytes are ASCII digits.
    private static bool AllDigits(ulong chunk) =>
        ((chunk & 0xF0F0F0F0F0F0F0F0) | (((chunk + 0x0606060606060606) & 0xF0F0F0F0F0F0F0F0) >> 4)) == 0x3333333333333333;

    // The value of eight ASCII digits, the first in the lowest byte.
    private static ulong EightDigits(ulong chunk)
    {
        ulong v = chunk - 0x3030303030303030;
        v = (v * 10) + (v >> 8);
        return (((v & 0x000000FF000000FF) * (100 + (1000000UL << 32))) + (((v >> 16) & 0x000000FF000000FF) * (1 + (10000UL << 32)))) >> 32;
    }

    private static bool IsDigit(byte c) => (uint)(c - '0') <= 9;

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
