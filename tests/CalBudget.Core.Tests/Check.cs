namespace CalBudget.Core.Tests;

/// <summary>Numeric assertions with a relative or absolute tolerance, stating both numbers on failure.</summary>
internal static class Check
{
    public static void Relative(double expected, double actual, double tolerance, string? what = null)
    {
        double scale = Math.Max(Math.Abs(expected), double.Epsilon);
        double error = Math.Abs(actual - expected) / scale;
        Assert.True(error <= tolerance,
            $"{what ?? "value"}: expected {expected:R}, got {actual:R} (relative error {error:G3} > {tolerance:G3})");
    }

    public static void Absolute(double expected, double actual, double tolerance, string? what = null)
    {
        double error = Math.Abs(actual - expected);
        Assert.True(error <= tolerance,
            $"{what ?? "value"}: expected {expected:R}, got {actual:R} (error {error:G3} > {tolerance:G3})");
    }
}
