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
/// <item>White FM, or PM noise (whose mean the standard deviation of the mean overstates): s / sqrt(n), nu = n - 1 -
/// unless the overlapping Allan variance at one of the two longest octaves with a white-FM edf of at least 8 lies above
/// the upper 97.5 % chi-squared point of the white-FM value AVAR(tau0) / m: then correlated noise governs near the run's length (the
/// 30-average floor of the lag-1 method cannot see it there), and the run is treated as correlated.</item>
/// <item>Correlated: the overlapping Allan variance over the octaves is fitted by a sum of power laws a/m + b + c m
/// (white, flicker and random-walk FM, coefficients &gt;= 0); the estimate at the longest octave factor m whose
/// equivalent degrees of freedom for the noise that dominates there are at least <see cref="MinimumDegreesOfFreedom"/>
/// (never one or two terms) is carried to the run's length T = N tau0 by that law, nu = that edf. For random-walk FM the Allan variance at tau = T equals the variance of the run's mean about the
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

        // White (or PM) at the factors the lag-1 method can use, but is it still white near the run's length? Under white FM
        // the overlapping Allan variance at m is AVAR(1) / m, and its estimate is chi-squared on its edf: one far above that says
        // correlated noise takes over at the long averaging times that govern the run's mean.
        string? longTau = null;
        if (alpha >= 0 && LongTauExcess(series, y.Length) is { } excess)
        {
            longTau = excess.Words(tau0);
            alpha = -1;
        }

        if (alpha >= 0)
        {
            string why = alpha == 0
                ? $"White FM identified at tau = {at * tau0:G4} s: the readings are uncorrelated, so the standard deviation of the mean applies."
                : $"{NoiseType.Name(alpha.Value)} identified at tau = {at * tau0:G4} s: the standard deviation of the mean overstates the uncertainty of the mean frequency and is kept as a conservative value.";
            return new TypeAEvaluation(mean, sdom, n - 1, TypeAEstimator.StandardDeviationOfMean, alpha, why, n, null, at);
        }

        // The lag-1 method tells correlated from white well, but not which power law governs the run's mean (flicker and
        // random-walk FM lie next to one boundary once differenced, and white noise at short averaging times can hide a walk
        // that takes over near the run's length). So the Allan variance over the octaves is fitted by a sum of power laws,
        // AVAR(m) = a/m + b + c m (white, flicker and random-walk FM), and the estimate at the longest octave with enough
        // terms is carried to the run's length by that fitted law.
        var carried = PowerLawCarry(series, y.Length);
        if (carried is not { } c)
        {
            return new TypeAEvaluation(mean, sdom, n - 1, TypeAEstimator.StandardDeviationOfMean, alpha,
                "The Allan deviation could not be computed at enough averaging factors (gaps): standard deviation of the mean used, which understates correlated noise.", n, null, at);
        }

        string identified = longTau ?? $"Correlated noise identified at tau = {at * tau0:G4} s (lag-1 autocorrelation)";
        return new TypeAEvaluation(mean, Math.Max(c.U, sdom), c.Edf, TypeAEstimator.AllanDeviation, c.Alpha,
            $"{identified}; the overlapping Allan variance fitted over the octaves as {c.Law}; {NoiseType.Name(c.Alpha)} governs at tau = {c.M * tau0:G4} s, " +
            $"the longest octave with edf >= {MinimumDegreesOfFreedom:G}, where the Allan deviation is {Math.Sqrt(c.Avar):G4}; carried to the run's length {y.Length * tau0:G6} s by the fitted law " +
            $"(the variance of the mean about the starting level: a/N + b/ln 2 + c N); nu = the edf there, {c.Edf:G4}.", n, c.M, at);
    }

    /// <summary>A power-law carry of the Allan variance to the run's length.</summary>
    private sealed record Carry(double U, double Edf, int M, double Avar, int Alpha, string Law);

    // Fits AVAR(m) = a/m + b + c m with a, b, c >= 0 (relative least squares weighted by each point's white-FM edf, the best
    // non-negative subset), then u^2 = AVAR_hat(m*) V(N) / M(m*), with M the fitted law, V(N) = a/N + b/ln 2 + c N the
    // variance of the run's mean about the starting level under it (white: exact; flicker: the Kasdin-Walter factor;
    // random walk: (2N^2 + 1)/(6N) against (N + 1)(2N + 1)/(6N), derived by hand), and m* the longest octave whose edf for
    // the component that dominates there is at least the minimum.
    private static Carry? PowerLawCarry(PhaseSeries series, int readings)
    {
        var points = new List<(int M, double Avar, double Weight, int Terms)>();
        for (int m = 1; 3 * m <= readings; m *= 2)
        {
            var estimate = Deviations.Variance(series, StabilityStatistic.Oadev, m);
            if (estimate.Terms > 0 && estimate.Variance > 0)
            {
                points.Add((m, estimate.Variance, EquivalentDegreesOfFreedom.Compute(StabilityStatistic.Oadev, 0, m, estimate.Terms, series.Length), estimate.Terms));
            }
        }

        if (points.Count < 3)
        {
            return null;
        }

        // every non-negative subset fit with its weighted residual; each point's relative error has variance about 2 / edf,
        // so half the residual is a chi-squared
        var fits = new List<(double[] Coefficients, double Residual)>();
        for (int mask = 1; mask < 8; mask++)
        {
            if (FitSubset(points, mask) is { } coefficients)
            {
                fits.Add((coefficients, points.Sum(p => p.Weight * Math.Pow((coefficients[0] / p.M + coefficients[1] + coefficients[2] * p.M - p.Avar) / p.Avar, 2))));
            }
        }

        if (fits.Count == 0)
        {
            return null;
        }

        // the most conservative law the Allan variances cannot tell from the best one (half the residual within 4 of the
        // best's): a walk that only starts to show near the run's length is not traded for a flatter law on a few noisy points
        double least = fits.Min(f => f.Residual);
        Carry? chosen = null;
        foreach (var (coefficients, residual) in fits.Where(f => (f.Residual - least) / 2 <= IndistinguishableChiSquared))
        {
            if (CarryBy(coefficients, points, series, readings) is { } carry && (chosen is null || carry.U > chosen.U))
            {
                chosen = carry;
            }
        }

        return chosen;
    }

    /// <summary>How much worse (half the weighted residual) a fitted law may be than the best and still be taken: 4, about two standard deviations.</summary>
    public const double IndistinguishableChiSquared = 4;

    private static Carry? CarryBy(double[] coefficients, List<(int M, double Avar, double Weight, int Terms)> points, PhaseSeries series, int readings)
    {
        double a = coefficients[0], b = coefficients[1], c = coefficients[2];
        double Law(double m) => a / m + b + c * m;
        int Dominant(double m) => (a / m >= b && a / m >= c * m) ? 0 : b >= c * m ? -1 : -2;
        for (int i = points.Count - 1; i >= 0; i--)
        {
            var p = points[i];
            int alpha = Dominant(p.M);
            double edf = EquivalentDegreesOfFreedom.Compute(StabilityStatistic.Oadev, alpha, p.M, p.Terms, series.Length);
            if ((edf >= MinimumDegreesOfFreedom && 4 * p.M <= readings) || i == 0)
            {
                double mean = a / readings + b * FlickerMeanFactor + c * readings;
                double variance = p.Avar * mean / Law(p.M);
                string law = string.Create(System.Globalization.CultureInfo.InvariantCulture, $"a/m + b + c m with a = {a:G3}, b = {b:G3}, c = {c:G3}");
                return new Carry(Math.Sqrt(variance), edf, p.M, p.Avar, alpha, law);
            }
        }

        return null;
    }

    // Least squares of the relative residuals for the components in mask (1: a/m, 2: b, 4: c m); null unless every coefficient is >= 0.
    private static double[]? FitSubset(List<(int M, double Avar, double Weight, int Terms)> points, int mask)
    {
        int[] used = [.. Enumerable.Range(0, 3).Where(j => (mask & (1 << j)) != 0)];
        int k = used.Length;
        var normal = new double[k, k];
        var right = new double[k];
        foreach (var p in points)
        {
            double[] basis = [1.0 / p.M / p.Avar, 1.0 / p.Avar, p.M / p.Avar];
            for (int r = 0; r < k; r++)
            {
                right[r] += p.Weight * basis[used[r]];
                for (int q = 0; q < k; q++)
                {
                    normal[r, q] += p.Weight * basis[used[r]] * basis[used[q]];
                }
            }
        }

        var solution = MathNet.Numerics.LinearAlgebra.Matrix<double>.Build.DenseOfArray(normal).Solve(MathNet.Numerics.LinearAlgebra.Vector<double>.Build.DenseOfArray(right));
        var coefficients = new double[3];
        for (int r = 0; r < k; r++)
        {
            if (!double.IsFinite(solution[r]) || solution[r] < 0)
            {
                return null;
            }

            coefficients[used[r]] = solution[r];
        }

        return coefficients;
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

    /// <summary>The probability with which white FM readings pass the long-tau check at each octave tested (a false alarm costs only a larger u).</summary>
    public const double LongTauConfidence = 0.975;

    /// <summary>How many of the longest usable octaves the long-tau check tests (about 5 % false alarms in all for white FM).</summary>
    public const int LongTauOctaves = 2;

    private sealed record Excess(int M, double Ratio, double Limit)
    {
        public string Words(double tau0) => string.Create(System.Globalization.CultureInfo.InvariantCulture,
            $"White noise at short averaging times, but the Allan variance at tau = {M * tau0:G4} s is {Ratio:G3} times the white-FM value AVAR(tau0)/m (above the 97.5 % limit {Limit:G3} for its edf): correlated noise near the run's length");
    }

    // At the two longest octaves m (at most N/4) whose white-FM edf is at least the minimum: AVAR(m) m / AVAR(1) against the
    // upper 97.5 % point of chi^2(edf)/edf (AVAR(1), on about N degrees of freedom, is the white level a walk does not inflate).
    private static Excess? LongTauExcess(PhaseSeries series, int readings)
    {
        double variance = Deviations.Variance(series, StabilityStatistic.Oadev, 1).Variance;
        if (!(variance > 0))
        {
            return null;
        }

        int m = 1;
        while (2 * m <= readings / 4)
        {
            m *= 2;
        }

        int tested = 0;
        for (; m >= 2; m /= 2)
        {
            var estimate = Deviations.Variance(series, StabilityStatistic.Oadev, m);
            if (estimate.Terms == 0 || !(estimate.Variance >= 0))
            {
                continue;
            }

            double edf = EquivalentDegreesOfFreedom.Compute(StabilityStatistic.Oadev, 0, m, estimate.Terms, series.Length);
            if (edf < MinimumDegreesOfFreedom)
            {
                continue;
            }

            double ratio = estimate.Variance * m / variance;
            double limit = MathNet.Numerics.Distributions.ChiSquared.InvCDF(edf, LongTauConfidence) / edf;
            if (ratio > limit)
            {
                return new Excess(m, ratio, limit);
            }

            if (++tested == LongTauOctaves)
            {
                break;
            }
        }

        return null;
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
