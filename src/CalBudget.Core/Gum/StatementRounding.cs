using System.Globalization;

namespace CalBudget.Core.Gum;

/// <summary>How the last kept digit of an uncertainty is rounded.</summary>
public enum UncertaintyRounding
{
    /// <summary>To the nearest digit, halves away from zero (JCGM 100 7.2.6).</summary>
    Nearest,
    /// <summary>Always up, for a lab whose policy is never to understate (JCGM 100 7.2.6 allows it).</summary>
    Up,
}

/// <summary>A value and its expanded uncertainty rounded for a statement.</summary>
/// <param name="Value">The value rounded to the decimal place of the uncertainty's last kept digit.</param>
/// <param name="Uncertainty">The uncertainty to at most the significant digits asked for.</param>
/// <param name="LastDigitExponent">The power of ten of the last kept digit (for example -12 for 4.8e-11).</param>
public sealed record RoundedStatement(double Value, double Uncertainty, int LastDigitExponent)
{
    /// <summary>The common power of ten for writing both numbers in scientific notation: that of the first digit of the larger.</summary>
    public int DisplayExponent { get; init; }

    /// <summary>
    /// "(v ± U) × 10ᵉ" (a superscript exponent, <see cref="Notation"/>) in the invariant culture, both numbers with the same number of decimals; plain decimals
    /// ("v ± U") when the larger number's first digit lies between 10^-3 and 10^4.
    /// </summary>
    public string ToScientific()
    {
        if (DisplayExponent is >= -3 and <= 4)
        {
            string plain = "F" + Math.Max(0, -LastDigitExponent).ToString(CultureInfo.InvariantCulture);
            return $"{Value.ToString(plain, CultureInfo.InvariantCulture)} ± {Uncertainty.ToString(plain, CultureInfo.InvariantCulture)}";
        }

        int decimals = Math.Max(0, DisplayExponent - LastDigitExponent);
        double scale = Math.Pow(10, -DisplayExponent);
        string fmt = "F" + decimals.ToString(CultureInfo.InvariantCulture);
        string v = (Value * scale).ToString(fmt, CultureInfo.InvariantCulture);
        string u = (Uncertainty * scale).ToString(fmt, CultureInfo.InvariantCulture);
        return $"({v} ± {u}) × {Notation.Power(DisplayExponent)}";
    }
}

/// <summary>
/// Rounding of results for statements: the uncertainty to at most two significant digits, the value to the same
/// decimal place (JCGM 100:2008 7.2.6; ILAC-P14).
/// </summary>
public static class StatementRounding
{
    /// <summary>Rounds <paramref name="uncertainty"/> (finite, &gt; 0) to <paramref name="significantDigits"/> digits and <paramref name="value"/> to the same place.</summary>
    public static RoundedStatement Round(double value, double uncertainty, int significantDigits = 2,
        UncertaintyRounding mode = UncertaintyRounding.Nearest)
    {
        if (!double.IsFinite(value))
        {
            throw new MetrologyException("value", "The value must be finite.");
        }

        if (!double.IsFinite(uncertainty) || uncertainty <= 0)
        {
            throw new MetrologyException("uncertainty", "The uncertainty must be finite and > 0.");
        }

        if (significantDigits is < 1 or > 15)
        {
            throw new MetrologyException("significantDigits", "Between 1 and 15 significant digits.");
        }

        int first = (int)Math.Floor(Math.Log10(uncertainty));
        int last = first - (significantDigits - 1);
        double roundedU = RoundAt(uncertainty, last, mode);
        // Rounding can carry into a new leading digit (9.96 -> 10): recompute the places from the rounded number.
        int newFirst = (int)Math.Floor(Math.Log10(roundedU));
        if (newFirst > first)
        {
            first = newFirst;
            last = first - (significantDigits - 1);
            roundedU = RoundAt(roundedU, last, UncertaintyRounding.Nearest);
        }

        double roundedV = RoundAt(value, last, UncertaintyRounding.Nearest);
        int display = (int)Math.Floor(Math.Log10(Math.Max(Math.Abs(roundedV), roundedU)));
        return new RoundedStatement(roundedV, roundedU, last) { DisplayExponent = display };
    }

    // Works on the decimal mantissa (the double-to-decimal conversion keeps 15 significant digits), so that 2.45e-10
    // rounds as the decimal number it is written as, not as its binary neighbour 2.4499999e-10.
    private static double RoundAt(double x, int exponent, UncertaintyRounding mode)
    {
        double scaledDouble = exponent < 0 ? x * Math.Pow(10, -exponent) : x / Math.Pow(10, exponent);
        if (Math.Abs(scaledDouble) > 1e27)
        {
            return x; // more digits than a double holds: nothing to round
        }

        decimal scaled = (decimal)scaledDouble;
        decimal whole = mode == UncertaintyRounding.Up
            ? Math.Ceiling(scaled)
            : Math.Round(scaled, MidpointRounding.AwayFromZero);
        // Dividing by an exact power of ten gives the nearest double to the decimal result.
        return exponent < 0 ? (double)whole / Math.Pow(10, -exponent) : (double)whole * Math.Pow(10, exponent);
    }
}
