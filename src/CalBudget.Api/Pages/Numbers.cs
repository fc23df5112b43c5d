using System.Globalization;

namespace CalBudget.Api.Pages;

/// <summary>How the staff pages write numbers: invariant culture, scientific notation for fractional quantities.</summary>
public static class Numbers
{
    /// <summary>A fractional value to three significant digits, e.g. 2.31E-09.</summary>
    public static string Sci(double v) => v.ToString("0.00E+00", CultureInfo.InvariantCulture);

    /// <summary>An uncertainty to two significant digits, e.g. 3.6E-09.</summary>
    public static string Unc(double u) => u.ToString("0.0E+00", CultureInfo.InvariantCulture);

    /// <summary>A UTC time.</summary>
    public static string Time(DateTimeOffset t) => t.UtcDateTime.ToString("yyyy-MM-dd HH:mm 'UTC'", CultureInfo.InvariantCulture);

    /// <summary>A plain number.</summary>
    public static string Plain(double v) => v.ToString("G6", CultureInfo.InvariantCulture);
}
