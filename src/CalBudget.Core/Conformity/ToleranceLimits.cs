namespace CalBudget.Core.Conformity;

/// <summary>
/// The tolerance interval of a fractional frequency offset: a lower limit T_L, an upper limit T_U, or both
/// (dimensionless, for example -5e-9 and 5e-9).
/// </summary>
public sealed record ToleranceLimits
{
    private ToleranceLimits(double? lower, double? upper)
    {
        Lower = lower;
        Upper = upper;
    }

    /// <summary>T_L, or null for an upper limit alone.</summary>
    public double? Lower { get; }

    /// <summary>T_U, or null for a lower limit alone.</summary>
    public double? Upper { get; }

    /// <summary>True when both limits are given.</summary>
    public bool IsTwoSided => Lower is not null && Upper is not null;

    /// <summary>Limits from the stated values; at least one, each finite, the lower below the upper.</summary>
    public static ToleranceLimits Create(double? lower, double? upper)
    {
        if (lower is null && upper is null)
        {
            throw new MetrologyException("tolerance", "Give a lower limit, an upper limit or both.");
        }

        if (lower is { } l && !double.IsFinite(l))
        {
            throw new MetrologyException("tolerance.lower", "Must be a finite number.");
        }

        if (upper is { } u && !double.IsFinite(u))
        {
            throw new MetrologyException("tolerance.upper", "Must be a finite number.");
        }

        if (lower is { } lo && upper is { } hi && !(lo < hi))
        {
            throw new MetrologyException("tolerance.lower", $"The lower limit ({lo:R}) must be below the upper limit ({hi:R}).");
        }

        return new ToleranceLimits(lower, upper);
    }

    /// <summary>Symmetric limits +/- <paramref name="halfWidth"/> (&gt; 0).</summary>
    public static ToleranceLimits Symmetric(double halfWidth) =>
        double.IsFinite(halfWidth) && halfWidth > 0
            ? new ToleranceLimits(-halfWidth, halfWidth)
            : throw new MetrologyException("tolerance", "The half-width must be a finite number > 0.");

    /// <summary>True when T_L &lt;= y &lt;= T_U (limits included).</summary>
    public bool Contains(double y) => (Lower is not { } l || y >= l) && (Upper is not { } u || y <= u);
}
