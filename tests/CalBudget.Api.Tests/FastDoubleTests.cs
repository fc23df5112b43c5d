using System.Globalization;
using System.Text;
using CalBudget.Api.Analytics;

namespace CalBudget.Api.Tests;

/// <summary>
/// The fast number reader against the reference: .NET's own double.Parse, which rounds correctly (IEEE 754
/// round-to-nearest-even), bit for bit.
/// </summary>
public sealed class FastDoubleTests
{
    private static void AssertSame(string text)
    {
        Assert.True(FastDouble.TryParse(Encoding.ASCII.GetBytes(text), out double fast), text);
        double reference = double.Parse(text, NumberStyles.Float, CultureInfo.InvariantCulture);
        Assert.True(BitConverter.DoubleToUInt64Bits(reference) == BitConverter.DoubleToUInt64Bits(fast), $"{text}: {fast:R} against {reference:R}");
    }

    [Fact]
    public void RandomDoublesInEveryFormatReadBackBitForBit()
    {
        var random = new Random(20261201);
        for (int n = 0; n < 200_000; n++)
        {
            double v = BitConverter.Int64BitsToDouble(random.NextInt64(0x0010_0000_0000_0000, 0x7FE0_0000_0000_0000));
            if (random.Next(2) == 0)
            {
                v = -v;
            }

            AssertSame(v.ToString("R", CultureInfo.InvariantCulture));
            AssertSame(v.ToString("E" + random.Next(0, 19), CultureInfo.InvariantCulture));
            AssertSame(v.ToString("G" + random.Next(1, 20), CultureInfo.InvariantCulture));
        }
    }

    [Fact]
    public void ReadingsSizedNumbersReadBackBitForBit()
    {
        var random = new Random(7);
        for (int n = 0; n < 200_000; n++)
        {
            double v = (random.NextDouble() - 0.5) * Math.Pow(10, random.Next(-16, 8));
            AssertSame(v.ToString("R", CultureInfo.InvariantCulture));
            AssertSame(v.ToString("F" + random.Next(0, 16), CultureInfo.InvariantCulture));
        }
    }

    [Theory]
    [InlineData("0")]
    [InlineData("-0")]
    [InlineData("1")]
    [InlineData("9007199254740993")]       // 2^53 + 1: a tie between two doubles, even one wins
    [InlineData("9007199254740995")]       // 2^53 + 3: the other tie
    [InlineData("9007199254740992.5")]
    [InlineData("4.9406564584124654e-324")] // the smallest subnormal
    [InlineData("2.2250738585072011e-308")] // just below the smallest normal
    [InlineData("2.2250738585072014e-308")] // the smallest normal
    [InlineData("1.7976931348623157e308")]  // the largest double
    [InlineData("1.7976931348623159e308")]  // rounds to infinity
    [InlineData("1e400")]
    [InlineData("1e-400")]
    [InlineData("12345678901234567890123")] // more digits than a 64-bit significand holds
    [InlineData("0.000000000000000000000000000000000000000001")]
    [InlineData("1.00000000000000011102230246251565404236316680908203125")] // exactly half way above 1
    [InlineData("1.00000000000000011102230246251565404236316680908203126")]
    [InlineData("7.2057594037927933e16")]
    [InlineData("1E23")]
    [InlineData("8.41E21")]
    public void EdgeCasesAgreeWithTheReference(string text) => AssertSame(text);
}
