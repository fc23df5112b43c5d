namespace CalBudget.Core.Stability;

/// <summary>Which estimator gave the Type A uncertainty of a run's mean frequency.</summary>
public enum TypeAEstimator
{
    /// <summary>s / sqrt(n) with n - 1 degrees of freedom (JCGM 100 4.2.3).</summary>
    StandardDeviationOfMean,
    /// <summary>
    /// The overlapping Allan deviation at the longest averaging time that still has enough terms, carried to the run's
    /// length by the identified power-law slope, with that estimate's equivalent degrees of freedom (NIST SP 1065).
    /// </summary>
    AllanDeviation,
}

/// <summary>The Type A evaluation of one calibration run's readings.</summary>
/// <param name="Mean">Mean fractional frequency of the readings.</param>
/// <param name="StandardUncertainty">u of the mean.</param>
/// <param name="DegreesOfFreedom">Its degrees of freedom (for the Allan estimator, the edf of the deviation it was carried from).</param>
/// <param name="Estimator">Which estimator was used.</param>
/// <param name="NoiseAlpha">The identified noise exponent, or null when it could not be identified.</param>
/// <param name="Reason">Why that estimator, in words for the budget's record.</param>
/// <param name="Count">Readings used (gaps left out).</param>
/// <param name="AveragingFactor">For the Allan estimator, the factor m whose deviation was carried to the run's length; else null.</param>
/// <param name="IdentifiedAtFactor">The averaging factor at which the noise was identified, or null.</param>
public sealed record TypeAEvaluation(double Mean, double StandardUncertainty, double DegreesOfFreedom, TypeAEstimator Estimator,
    int? NoiseAlpha, string Reason, int Count, int? AveragingFactor = null, int? IdentifiedAtFactor = null);

/// <summary>
/// The Type A term of a timebase reading: the standard uncertainty of the run's mean fractional frequency.
/// </summary>
/// <remarks>
/// <para>The plain standard deviation of the mean is right only when the readings are uncorrelated (white FM); with
/// flicker or random-walk FM it understates the scatter of the mean (NIST SP 1065; ../shared/DOMAIN.md, practice). The rule:</para>
/// <list type="number">
/// <item>The noise is identified by the lag-1 autocorrelation (SP 1065 5.6) at the longest octave averaging factors that
/// still leave at least 30 averages (the ones nearest the run's length), the two longest when there are two; the more
/// correlated of the two answers is taken, so that a run is never called white on the strength of one noisy look.</item>
/// <item>White FM, or PM noise (whose mean the standard deviation of the mean overstates): s / sqrt(n), nu = n - 1.</item>
/// <item>Flicker or random-walk FM: the overlapping Allan variance at the longest octave factor m whose equivalent
/// degrees of freedom for that noise are at least <see cref="MinimumDegreesOfFreedom"/> (never one or two terms),
/// carried to the run's length T = N tau0 by the power law sigma_y^2(tau) ~ tau^mu (mu = 0 flicker, 1 random walk),
/// nu = that edf. For random-walk FM the Allan variance at tau = T equals the variance of the run's mean about the
/// level the oscillator had at the start, (2N^2 + 1) / (6N) against (N + 1)(2N + 1) / (6N) in units of the step
/// variance (derived by hand); for flicker FM that variance is 1 / ln 2 times the Allan variance (2 sigma^2 / pi
/// against 2 ln 2 sigma^2 / pi for the discrete flicker model of N. J. Kasdin and T. Walter, 1992; derived by hand),
/// and the factor is applied.</item>
/// <item>Not identified (fewer than 30 readings): the larger of the white-FM and the flicker-FM estimates, with the
/// smaller of their degrees of freedom, so that the answer holds whichever it is.</item>
/// </list>
/// </remarks>
public static class TimebaseTypeA
{
    /// <summary>The fewest equivalent degrees of freedom an Allan estimate must have to be used: with 8, a chi-squared estimate falls below half the true deviation in under 2 % of runs.</summary>
    public const double MinimumDegreesOfFreedom = 8;

    /// <summary>The fewest averages the bias ratio is taken over (its sample variance of a random walk has few degrees of freedom).</summary>
    public const int BiasRatioAverages = 100;

    // Var(mean about the starting level) / AVAR(T) for discrete flicker FM (Kasdin and Walter): (2/pi) / (2 ln 2 / pi).
    private static readonly double FlickerMeanFactor = 1 / Math.Log(2);

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
        using var series = PhaseSeries.From(y, StabilityDataType.Frequency, tau0);
        var (alpha, at) = Identify(series, readings);
        if (alpha is null)
        {
            var flicker = CarriedAllan(series, -1, y.Length);
            if (flicker is not { } f || f.U <= sdom)
            {
                return new TypeAEvaluation(mean, sdom, Math.Min(n - 1, flicker?.Edf ?? n - 1), TypeAEstimator.StandardDeviationOfMean, null,
                    $"Noise not identified (fewer than {NoiseIdentification.MinimumPoints} readings): the larger of the white-FM estimate (standard deviation of the mean) " +
                    "and the flicker-FM estimate (Allan deviation carried to the run's length), here the former, with the smaller of their degrees of freedom.", n);
            }

            return new TypeAEvaluation(mean, f.U, Math.Min(n - 1, f.Edf), TypeAEstimator.AllanDeviation, null,
                $"Noise not identified (fewer than {NoiseIdentification.MinimumPoints} readings): the larger of the white-FM estimate (standard deviation of the mean) " +
                $"and the flicker-FM estimate, here the latter: overlapping Allan deviation at tau = {f.M * tau0:G4} s carried to the run's length, " +
                "with the smaller of their degrees of freedom.", n, f.M);
        }

        if (alpha >= 0)
        {
            string why = alpha == 0
                ? $"White FM identified at tau = {at * tau0:G4} s: the readings are uncorrelated, so the standard deviation of the mean applies."
                : $"{NoiseType.Name(alpha.Value)} identified at tau = {at * tau0:G4} s: the standard deviation of the mean overstates the uncertainty of the mean frequency and is kept as a conservative value.";
            return new TypeAEvaluation(mean, sdom, n - 1, TypeAEstimator.StandardDeviationOfMean, alpha, why, n, null, at);
        }

        // The lag-1 method tells correlated from white well, but flicker from random-walk FM poorly once the averages are
        // differenced (their expected delta for flicker FM, -0.28, lies next to the -0.25 boundary); Barnes's bias ratio B1
        // tells those two apart by a factor of about six at 30 averages, so it decides between them.
        int bm = 1;
        while (2 * bm <= y.Length / BiasRatioAverages)
        {
            bm *= 2;
        }

        var (b1, threshold) = BiasRatio(series, y, bm);
        alpha = b1 <= threshold ? -1 : -2;
        var carried = CarriedAllan(series, alpha.Value, y.Length);
        if (carried is not { } c)
        {
            return new TypeAEvaluation(mean, sdom, n - 1, TypeAEstimator.StandardDeviationOfMean, alpha,
                "The Allan deviation could not be computed at any averaging factor (gaps): standard deviation of the mean used, which understates correlated noise.", n, null, at);
        }

        string slope = alpha == -1
            ? "flat for flicker FM (sigma_y^2 constant), times 1/ln 2 for the mean about the starting level"
            : "sigma_y^2 proportional to tau for random-walk FM";
        return new TypeAEvaluation(mean, Math.Max(c.U, sdom), c.Edf, TypeAEstimator.AllanDeviation, alpha,
            $"Correlated noise identified at tau = {at * tau0:G4} s (lag-1 autocorrelation), {NoiseType.Name(alpha.Value)} by the bias ratio B1 = {b1:G3} at tau = {bm * tau0:G4} s " +
            $"(threshold {threshold:G3}): the standard deviation of the mean understates the scatter; " +
            $"overlapping Allan deviation {Math.Sqrt(c.Avar):G4} at tau = {c.M * tau0:G4} s (the longest octave with edf >= {MinimumDegreesOfFreedom:G}), carried to the run's length " +
            $"{y.Length * tau0:G6} s ({slope}); nu = its edf {c.Edf:G4}.", n, c.M, at);
    }

    // The two longest octave factors that leave at least 30 averages; the more correlated answer (the smaller alpha).
    private static (int? Alpha, int? At) Identify(PhaseSeries series, ReadOnlyMemory<double> readings)
    {
        var identification = new NoiseIdentification(series, readings);
        int m = 1;
        while (2 * m <= readings.Length / NoiseIdentification.MinimumPoints)
        {
            m *= 2;
        }

        int? alpha = null;
        int? at = null;
        for (int k = 0; k < 2 && m >= 1; k++, m /= 2)
        {
            if (identification.Identify(m, 2) is int a && (alpha is null || a < alpha))
            {
                alpha = a;
                at = m;
            }
        }

        return (alpha, at);
    }

    /// <summary>
    /// Barnes's bias ratio B1 = (sample variance of the averages over m) / (Allan variance at m), and the threshold between
    /// flicker FM and random-walk FM: half the geometric mean of their expected values for N averages, B1(N, 0) = N ln N /
    /// (2 (N - 1) ln 2) and B1(N, 1) = N / 2 (NIST SP 1065 5.6, B1(N, mu) = N (1 - N^mu) / (2 (N - 1)(1 - 2^mu))).
    /// </summary>
    internal static (double B1, double Threshold) BiasRatio(PhaseSeries series, ReadOnlySpan<double> y, int m)
    {
        var averages = new List<double>(y.Length / m);
        for (int start = 0; start + m <= y.Length; start += m)
        {
            if (series.Complete(start, start + m))
            {
                averages.Add((series.X[start + m] - series.X[start]) / (m * series.Tau0));
            }
        }

        int n = averages.Count;
        var allan = Deviations.Variance(series, StabilityStatistic.Oadev, m);
        if (n < 2 || allan.Terms == 0 || !(allan.Variance > 0))
        {
            return (double.NaN, double.NaN);
        }

        double mean = averages.Average();
        double variance = averages.Sum(v => (v - mean) * (v - mean)) / (n - 1);
        double flicker = n * Math.Log(n) / (2 * (n - 1) * Math.Log(2));
        double walk = n / 2.0;
        // the geometric mean of the two expectations, halved: calling flicker FM a random walk overstates u, the converse
        // understates it, so the boundary leans to the safe side (in simulation it then errs either way in about 1 % of runs)
        return (variance / allan.Variance, Math.Sqrt(flicker * walk) / 2);
    }

    // u^2 = AVAR(m) (N/m)^mu x the flicker factor, at the longest octave m with edf >= the minimum (m = 1 when none has).
    private static (double U, double Edf, int M, double Avar)? CarriedAllan(PhaseSeries series, int alpha, int readings)
    {
        int mu = -alpha - 1;
        int m = 1;
        while (2 * m <= readings / 4)
        {
            m *= 2;
        }

        for (; m >= 1; m /= 2)
        {
            var estimate = Deviations.Variance(series, StabilityStatistic.Oadev, m);
            if (estimate.Terms == 0 || !(estimate.Variance >= 0))
            {
                continue;
            }

            double edf = EquivalentDegreesOfFreedom.Compute(StabilityStatistic.Oadev, alpha, m, estimate.Terms, series.Length);
            if (edf >= MinimumDegreesOfFreedom || m == 1)
            {
                double variance = estimate.Variance * Math.Pow((double)readings / m, mu) * (alpha == -1 ? FlickerMeanFactor : 1);
                return (Math.Sqrt(variance), edf, m, estimate.Variance);
            }
        }

        return null;
    }
}
