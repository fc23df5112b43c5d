namespace CalBudget.Core.Gum;

/// <summary>A correlation coefficient r(x_i, x_j) in [-1, 1] between two named inputs (JCGM 100 5.2.2).</summary>
public sealed record Correlation
{
    private Correlation(string first, string second, double coefficient)
    {
        First = first;
        Second = second;
        Coefficient = coefficient;
    }

    /// <summary>Name of the first input.</summary>
    public string First { get; }

    /// <summary>Name of the second input.</summary>
    public string Second { get; }

    /// <summary>The coefficient r, -1 &lt;= r &lt;= 1.</summary>
    public double Coefficient { get; }

    /// <summary>Creates a correlation between two different inputs.</summary>
    public static Correlation Between(string first, string second, double coefficient)
    {
        if (string.IsNullOrWhiteSpace(first) || string.IsNullOrWhiteSpace(second))
        {
            throw new MetrologyException("between", "A correlation names two inputs.");
        }

        if (string.Equals(first.Trim(), second.Trim(), StringComparison.Ordinal))
        {
            throw new MetrologyException("between", "A correlation names two different inputs.");
        }

        if (!double.IsFinite(coefficient) || coefficient < -1 || coefficient > 1)
        {
            throw new MetrologyException("coefficient", "A correlation coefficient lies in [-1, 1].");
        }

        return new Correlation(first.Trim(), second.Trim(), coefficient);
    }
}
