namespace CalBudget.Core.Stability;

/// <summary>Which estimator gave the Type A uncertainty of a run's mean frequency.</summary>
public enum TypeAEstimator
{
    /// <summary>s / sqrt(n) with n - 1 degrees of freedom (JCGM 100 4.2.3).</summary>
    StandardDeviationOfMean,
    /// <summary>The overlapping Allan deviation at half the run's duration, with its equivalent degrees of freedom (NIST SP 1065).</summary>
    AllanDeviation,
}

/// <summary>The Type A evaluation of one calibration run's readings.</summary>
/// <param name="Mean">Mean fractional frequency of the readings.</param>
/// <param name="StandardUncertainty">u of the mean.</param>
/// <param name="DegreesOfFreedom">Its degrees of freedom.</param>
/// <param name="Estimator">Which estimator was used.</param>
/// <param name="NoiseAlpha">The identified noise exponent, or null when it could not be identified.</param>
/// <param name="Reason">Why that estimator, in words for the budget's record.</param>
/// <param name="Count">Readings used (gaps left out).</param>
public sealed record TypeAEvaluation(double Mean, double StandardUncertainty, double DegreesOfFreedom, TypeAEstimator Estimator,
    int? NoiseAlpha, string Reason, int Count);

/// <summary>
/// The Type A term of a timebase reading: the standard uncertainty of the run's mean fractional frequency. The plain
/// standard deviation of the mean is right only when the readings are uncorrelated (white FM); with flicker or
/// random-walk FM it understates the scatter, and the Allan deviation at the averaging time is the estimator to state
/// (NIST SP 1065; ../shared/DOMAIN.md, practice).
/// </summary>
public static class TimebaseTypeA
{
    /// <summary>Evaluates fractional-frequency <paramref name="readings"/> taken every <paramref name="tau0"/> seconds (NaN: gap).</summary>
    public static TypeAEvaluation Evaluate(ReadOnlyMemory<double> readings, double tau0)
    {
        if (!double.IsFinite(tau0) || tau0 <= 0)
        {
            throw new MetrologyException("tau0", "tau0 must be a finite number of seconds > 0.");
        }

        var y = readings.Span;
        double sum = 0;
        int n = 0;
        foreach (double v in y)
        {
            if (double.IsInfinity(v))
            {
                throw new MetrologyException("values", "Readings must be finite (NaN marks a gap).");
            }

            if (!double.IsNaN(v))
            {
                sum += v;
                n++;
            }
        }

        if (n < 2)
        {
            throw new MetrologyException("values", "A Type A evaluation needs at least two readings.") { NotComputable = true };
        }

        double mean = sum / n;
        double ss = 0;
        foreach (double v in y)
        {
            if (!double.IsNaN(v))
            {
                ss += (v - mean) * (v - mean);
            }
        }

        double sdom = Math.Sqrt(ss / (n - 1) / n);
        // Identify the noise as close to the run's averaging time as the method allows (at least 30 averaged points).
        int m = 1;
        while (2 * m <= y.Length / NoiseIdentification.MinimumPoints)
        {
            m *= 2;
        }

        using var series = PhaseSeries.From(y, StabilityDataType.Frequency, tau0);
        int? alpha = new NoiseIdentification(series, readings).Identify(m, 2);
        if (alpha is null)
        {
            return new TypeAEvaluation(mean, sdom, n - 1, TypeAEstimator.StandardDeviationOfMean, null,
                $"Noise not identified (fewer than {NoiseIdentification.MinimumPoints} readings): standard deviation of the mean, which holds for white FM only.", n);
        }

        if (alpha >= 0)
        {
            string why = alpha == 0
                ? "White FM identified: the readings are uncorrelated, so the standard deviation of the mean applies."
                : $"{NoiseType.Name(alpha.Value)} identified: the standard deviation of the mean overstates the uncertainty of the mean frequency and is kept as a conservative value.";
            return new TypeAEvaluation(mean, sdom, n - 1, TypeAEstimator.StandardDeviationOfMean, alpha, why, n);
        }

        // The Allan deviation at half the run, with the edf for the noise just identified (asking the full analysis for this
        // one factor would identify the noise again there, from too few points, and fall back to white FM).
        int half = Math.Max(1, y.Length / 2);
        var estimate = Deviations.Variance(series, StabilityStatistic.Oadev, half);
        if (estimate.Terms == 0 || !(estimate.Variance >= 0))
        {
            return new TypeAEvaluation(mean, sdom, n - 1, TypeAEstimator.StandardDeviationOfMean, alpha,
                "The Allan deviation at half the run could not be computed (gaps); standard deviation of the mean used.", n);
        }

        double deviation = Math.Sqrt(estimate.Variance);
        double edf = EquivalentDegreesOfFreedom.Compute(StabilityStatistic.Oadev, alpha.Value, half, estimate.Terms, series.Length);
        return new TypeAEvaluation(mean, deviation, edf, TypeAEstimator.AllanDeviation, alpha,
            $"{NoiseType.Name(alpha.Value)} identified: the readings are correlated and the standard deviation of the mean understates the scatter; " +
            $"overlapping Allan deviation at tau = {half * tau0:G4} s (half the run) with its equivalent degrees of freedom.", n);
    }
}
