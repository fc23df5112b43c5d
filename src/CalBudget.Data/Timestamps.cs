using System.Globalization;

namespace CalBudget.Data;

/// <summary>
/// Times are stored as RFC 3339 UTC text with a fixed number of fractional digits ("2026-12-01T18:34:00.0000000Z"),
/// so that text order is time order and any SQL engine can read them.
/// </summary>
public static class Timestamps
{
    private const string Pattern = "yyyy-MM-dd'T'HH:mm:ss.fffffff'Z'";

    /// <summary>The stored form of <paramref name="time"/>, converted to UTC.</summary>
    public static string Format(DateTimeOffset time) => time.UtcDateTime.ToString(Pattern, CultureInfo.InvariantCulture);

    /// <summary>Reads a stored time back (offset zero).</summary>
    public static DateTimeOffset Parse(string text) =>
        DateTimeOffset.Parse(text, CultureInfo.InvariantCulture, DateTimeStyles.AssumeUniversal | DateTimeStyles.AdjustToUniversal);
}
