using System.Text.Json;
using CalBudget.Api.Certificates;
using CalBudget.Core.Aging;
using CalBudget.Core.Budgets;
using CalBudget.Data;
using CalBudget.Data.Certificates;

namespace CalBudget.Api.Budgets;

/// <summary>One dated result of an instrument.</summary>
/// <param name="Date">The calibration date.</param>
/// <param name="Offset">y then.</param>
/// <param name="ExpandedUncertainty">U then.</param>
/// <param name="CoverageFactor">k of that U (each result's own).</param>
/// <param name="Adjusted">True when the item was adjusted at that calibration, so this result (as left) starts a new history.</param>
public sealed record HistoryPoint(DateTimeOffset Date, double Offset, double ExpandedUncertainty, double CoverageFactor, bool Adjusted);

/// <summary>
/// An instrument's dated results and the aging fitted from them: only the results since its last adjustment (an
/// adjustment moves the frequency, so earlier results say nothing of the drift from there), each weighted by its own
/// standard uncertainty U / k.
/// </summary>
public static class InstrumentHistory
{
    /// <summary>The results of the instrument's certificates in force dated before <paramref name="before"/> (leaving out <paramref name="excludeBudgetId"/>'s).</summary>
    public static async Task<List<HistoryPoint>> CertificatesAsync(UnitOfWork work, long instrumentId, DateTimeOffset before, long? excludeBudgetId, JsonSerializerOptions o)
    {
        var points = new List<HistoryPoint>();
        foreach (var earlier in await CertificateStore.HistoryAsync(work, instrumentId))
        {
            var s = JsonSerializer.Deserialize<StatedResult>(earlier.Result, o)!;
            var settings = JsonSerializer.Deserialize<CertificateIssueRequest>(earlier.Settings, o);
            if (earlier.BudgetId != excludeBudgetId && s.CalibratedAt < before)
            {
                points.Add(new HistoryPoint(s.CalibratedAt, s.Estimate, s.ExpandedUncertainty, s.CoverageFactor, settings?.Adjusted == true));
            }
        }

        return points;
    }

    /// <summary>The points from the last adjusted one on (all of them when none was adjusted), in date order.</summary>
    public static HistoryPoint[] SinceLastAdjustment(IEnumerable<HistoryPoint> points)
    {
        var ordered = points.OrderBy(p => p.Date).ToArray();
        int last = Array.FindLastIndex(ordered, p => p.Adjusted);
        return last < 0 ? ordered : ordered[last..];
    }

    /// <summary>The linear aging fit of <paramref name="points"/> (days from the first), weighted by U / k; null with fewer than three.</summary>
    public static AgingResult? Fit(IReadOnlyList<HistoryPoint> points)
    {
        if (points.Count < 3 || points.Select(p => p.Date).Distinct().Count() < 2)
        {
            return null;
        }

        var origin = points[0].Date;
        return AgingFit.Fit(points.Select(p => new AgingPoint((p.Date - origin).TotalDays, p.Offset, p.ExpandedUncertainty / p.CoverageFactor)).ToArray(), AgingModel.Linear);
    }

    /// <summary>The fit as a budget's aging input, or null.</summary>
    public static AgingHistory? ForBudget(IReadOnlyList<HistoryPoint> points) =>
        Fit(points) is { } fit
            ? new AgingHistory(fit.Parameters[1], Math.Sqrt(fit.Covariance[1, 1]), fit.ResidualStandardDeviation, fit.DegreesOfFreedom, points.Count, points[0].Date)
            : null;
}
