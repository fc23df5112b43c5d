namespace CalBudget.Data;

/// <summary>Small SQL helpers shared by the stores.</summary>
public static class Sql
{
    /// <summary>A LIKE pattern matching <paramref name="text"/> anywhere, literally (%, _ and \ escaped; use with ESCAPE '\'), or null.</summary>
    public static string? ContainsPattern(string? text) => text is null
        ? null
        : "%" + text.Replace("\\", "\\\\", StringComparison.Ordinal).Replace("%", "\\%", StringComparison.Ordinal).Replace("_", "\\_", StringComparison.Ordinal) + "%";
}
