using System.Globalization;
using System.Text;

namespace CalBudget.Core.Gum;

/// <summary>
/// How numbers are written in statements, chosen once: scientific notation with a real superscript exponent
/// ("2.3 × 10⁻⁹"), plain decimals from 0.001 to below 10,000, the invariant culture, and frequencies in their unit
/// ("10 MHz"). Uncertainties to two significant digits, values to three unless a statement rounds them to the
/// uncertainty's decimal place (<see cref="StatementRounding"/>).
/// </summary>
public static class Notation
{
    private static readonly CultureInfo C = CultureInfo.InvariantCulture;

    /// <summary>10 to the power <paramref name="exponent"/> with a superscript exponent: 10⁻¹².</summary>
    public static string Power(int exponent) => "10" + Superscript(exponent.ToString(C));

    /// <summary>Digits and the minus sign as superscripts.</summary>
    public static string Superscript(string digits)
    {
        ArgumentNullException.ThrowIfNull(digits);
        var s = new StringBuilder(digits.Length);
        foreach (char c in digits)
        {
            s.Append(c switch
            {
                '-' => '⁻',
                '+' => '⁺',
                '0' => '⁰',
                '1' => '¹',
                '2' => '²',
                '3' => '³',
                '4' => '⁴',
                '5' => '⁵',
                '6' => '⁶',
                '7' => '⁷',
                '8' => '⁸',
                '9' => '⁹',
                _ => c,
            });
        }

        return s.ToString();
    }

    /// <summary><paramref name="value"/> to <paramref name="significantDigits"/> significant digits (1 to 15): "2.32 × 10⁻⁹", "0.0254", "0".</summary>
    public static string Scientific(double value, int significantDigits)
    {
        if (significantDigits is < 1 or > 15)
        {
            throw new ArgumentOutOfRangeException(nameof(significantDigits));
        }

        if (value == 0 || !double.IsFinite(value))
        {
            return value == 0 ? "0" : value.ToString(C);
        }

        int exponent = (int)Math.Floor(Math.Log10(Math.Abs(value)));
        double mantissa = Math.Round(value / Math.Pow(10, exponent), significantDigits - 1, MidpointRounding.AwayFromZero);
        if (Math.Abs(mantissa) >= 10)
        {
            mantissa /= 10;
            exponent++;
        }

        if (exponent is >= -3 and <= 3)
        {
            int decimals = Math.Max(0, significantDigits - 1 - exponent);
            return (mantissa * Math.Pow(10, exponent)).ToString("F" + decimals.ToString(C), C);
        }

        return $"{mantissa.ToString("F" + (significantDigits - 1).ToString(C), C)} × {Power(exponent)}";
    }

    /// <summary>A value to three significant digits.</summary>
    public static string Value(double value) => Scientific(value, 3);

    /// <summary>An uncertainty to two significant digits (JCGM 100 7.2.6).</summary>
    public static string Uncertainty(double uncertainty) => Scientific(uncertainty, 2);

    /// <summary>A frequency in its unit: "10 MHz", "32.768 kHz".</summary>
    public static string Frequency(double hertz) => hertz switch
    {
        >= 1e9 => (hertz / 1e9).ToString("G6", C) + " GHz",
        >= 1e6 => (hertz / 1e6).ToString("G6", C) + " MHz",
        >= 1e3 => (hertz / 1e3).ToString("G6", C) + " kHz",
        _ => hertz.ToString("G6", C) + " Hz",
    };

    /// <summary>An interval's ends to the decimal place of two significant digits of its half-width, in one power of ten: "[2.3122, 2.3229] × 10⁻⁹".</summary>
    public static string Interval(double low, double high)
    {
        var rounded = StatementRounding.Round((low + high) / 2, Math.Max((high - low) / 2, double.Epsilon));
        if (rounded.DisplayExponent is >= -3 and <= 4)
        {
            string plain = "F" + Math.Max(0, -rounded.LastDigitExponent).ToString(C);
            return $"[{low.ToString(plain, C)}, {high.ToString(plain, C)}]";
        }

        int decimals = Math.Max(0, rounded.DisplayExponent - rounded.LastDigitExponent);
        double scale = Math.Pow(10, -rounded.DisplayExponent);
        string fmt = "F" + decimals.ToString(C);
        return $"[{(low * scale).ToString(fmt, C)}, {(high * scale).ToString(fmt, C)}] × {Power(rounded.DisplayExponent)}";
    }

    /// <summary>The degrees of freedom a coverage factor was taken from: nu_eff truncated (JCGM 100 G.4.1), "infinite" when infinite.</summary>
    public static string DegreesOfFreedom(double? effective) => effective switch
    {
        null => "infinite",
        double.PositiveInfinity => "infinite",
        > 10_000 => "more than 10,000",
        { } nu => Math.Floor(nu).ToString("0", C),
    };
}
