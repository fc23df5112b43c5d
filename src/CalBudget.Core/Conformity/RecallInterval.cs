using CalBudget.Core.Aging;

namespace CalBudget.Core.Conformity;

/// <summary>A recall interval found from the aging fit.</summary>
/// <param name="Days">Days from the calibration to the first day the predicted offset with its expanded uncertainty reaches the tolerance; null when that does not happen within the longest interval.</param>
/// <param name="LongestDays">The longest interval considered (the lab's ceiling).</param>
/// <param name="PredictedOffsetAtRecall">The predicted offset on that day (or at the ceiling).</param>
/// <param name="ExpandedUncertaintyAtRecall">Its expanded uncertainty there.</param>
/// <param name="Method">How it was found, in words for the certificate.</param>
public sealed record RecallResult(int? Days, int LongestDays, double PredictedOffsetAtRecall, double ExpandedUncertaintyAtRecall, string Method);

/// <summary>
/// The predictive recall interval (the method family ILAC-G24 / OIML D10 describe for drifting instruments): the offset
/// after calibration is y(t) = y_cal + [f(t) - f(t_cal)], the calibrated value carried forward by the fitted aging
/// model f, with u(t)^2 = u_cal^2 + g^T C g (g the gradient of f(t) - f(t_cal) in the model's parameters, C their
/// covariance) plus the fit's residual scatter s^2 (the results scatter about the line by more than their own u says,
/// and a prediction must carry that), and U(t) = k u(t). The interval ends on the first whole day on which y(t) + U(t) reaches T_U or
/// y(t) - U(t) reaches T_L.
/// </summary>
public static class RecallInterval
{
    /// <summary>Finds the interval.</summary>
    /// <param name="fit">The aging fit of the instrument's dated results (days from any origin).</param>
    /// <param name="calibrationDay">The calibration's time on the fit's axis, in days.</param>
    /// <param name="calibratedOffset">y_cal, the result as left.</param>
    /// <param name="standardUncertainty">u_cal, its standard uncertainty.</param>
    /// <param name="coverageFactor">k of the certificate.</param>
    /// <param name="limits">The tolerance.</param>
    /// <param name="longestDays">The ceiling, 1 to 36,525 days.</param>
    /// <param name="residualScatter">s, the fit's residual standard deviation, added to every day's prediction after the calibration (0 to leave it out).</param>
    public static RecallResult Find(AgingResult fit, double calibrationDay, double calibratedOffset, double standardUncertainty, double coverageFactor,
        ToleranceLimits limits, int longestDays, double residualScatter = 0)
    {
        ArgumentNullException.ThrowIfNull(fit);
        ArgumentNullException.ThrowIfNull(limits);
        if (longestDays is < 1 or > 36_525)
        {
            throw new MetrologyException("recallInterval.longestDays", "Between 1 and 36525 days.");
        }

        if (!double.IsFinite(standardUncertainty) || standardUncertainty <= 0 || !double.IsFinite(coverageFactor) || coverageFactor <= 0)
        {
            throw new MetrologyException("standardUncertainty", "The result's uncertainty and coverage factor must be finite and > 0.");
        }

        (double Y, double U) At(int day)
        {
            double t = calibrationDay + day;
            double[] g = Gradient(fit, t, calibrationDay);
            double variance = standardUncertainty * standardUncertainty + (day > 0 ? residualScatter * residualScatter : 0);
            for (int i = 0; i < g.Length; i++)
            {
                for (int j = 0; j < g.Length; j++)
                {
                    variance += g[i] * fit.Covariance[i, j] * g[j];
                }
            }

            return (calibratedOffset + fit.ValueAt(t) - fit.ValueAt(calibrationDay), coverageFactor * Math.Sqrt(variance));
        }

        string model = fit.Model == AgingModel.Linear ? "linear" : "logarithmic";
        string method = $"Predictive: the as-left value carried forward by the {model} aging fit of the instrument's dated results " +
            $"({fit.DegreesOfFreedom + fit.Parameters.Length} points since the last adjustment, each weighted by its own U / k), with its uncertainty from the calibration result, " +
            "the fit's covariance and its residual scatter (aging is counted once: in the drift, not in the calibration uncertainty), " +
            $"expanded with k = {coverageFactor.ToString("0.00", System.Globalization.CultureInfo.InvariantCulture)}; the interval ends on the first day " +
            "on which the offset with its expanded uncertainty reaches a tolerance limit.";
        return Scan(At, limits, longestDays, method);
    }

    /// <summary>
    /// The interval from the specified aging rate when there are too few results since the last adjustment for a fit: the
    /// calibrated value is carried unchanged (the sign of the aging is not known) and the aging is a bound that grows
    /// with time, rectangular: u(t)^2 = u_cal^2 + (r t)^2 / 3, U(t) = k u(t); the interval ends on the first whole day on
    /// which y +/- U(t) reaches a limit.
    /// </summary>
    public static RecallResult FromSpecification(double calibratedOffset, double standardUncertainty, double coverageFactor, ToleranceLimits limits, int longestDays,
        double agingPerDay)
    {
        ArgumentNullException.ThrowIfNull(limits);
        if (longestDays is < 1 or > 36_525)
        {
            throw new MetrologyException("recallInterval.longestDays", "Between 1 and 36525 days.");
        }

        if (!double.IsFinite(standardUncertainty) || standardUncertainty <= 0 || !double.IsFinite(coverageFactor) || coverageFactor <= 0 || !double.IsFinite(agingPerDay))
        {
            throw new MetrologyException("standardUncertainty", "The result's uncertainty, coverage factor and the aging rate must be finite, the first two > 0.");
        }

        double rate = Math.Abs(agingPerDay);
        string method = "Predictive from the specification (fewer than three results since the last adjustment for an aging fit): the as-left value carried " +
            $"unchanged, the specified aging of {Gum.Notation.Uncertainty(rate)} per day as a bound of unknown sign growing with time (rectangular), with the " +
            $"calibration result's uncertainty, expanded with k = {coverageFactor.ToString("0.00", System.Globalization.CultureInfo.InvariantCulture)}; the interval ends on the first day on which " +
            "the offset with its expanded uncertainty reaches a tolerance limit.";
        return Scan(day => (calibratedOffset, coverageFactor * Math.Sqrt(standardUncertainty * standardUncertainty + Math.Pow(rate * day, 2) / 3)), limits, longestDays, method);
    }

    // The first whole day on which y(day) +/- U(day) reaches a limit, or none within the longest interval.
    private static RecallResult Scan(Func<int, (double Y, double U)> at, ToleranceLimits limits, int longestDays, string method)
    {
        for (int day = 0; day <= longestDays; day++)
        {
            var (y, u) = at(day);
            if ((limits.Upper is { } hi && y + u >= hi) || (limits.Lower is { } lo && y - u <= lo))
            {
                return new RecallResult(day, longestDays, y, u, method);
            }
        }

        var end = at(longestDays);
        return new RecallResult(null, longestDays, end.Y, end.U, method);
    }

    // d/dp [f(t) - f(t0)] for the model's parameters.
    private static double[] Gradient(AgingResult fit, double t, double t0)
    {
        if (fit.Model == AgingModel.Linear)
        {
            return [0, t - t0];
        }

        double a = fit.Parameters[0], b = fit.Parameters[1];
        return [Math.Log(b * t + 1) - Math.Log(b * t0 + 1), a * t / (b * t + 1) - a * t0 / (b * t0 + 1), 0];
    }
}
