using System.Globalization;
using CalBudget.Core.Gum;
using CalBudget.Core.Orientation;
using CalBudget.Core.Stability;

namespace CalBudget.Core.Budgets;

/// <summary>How a template contribution obtains its value.</summary>
public enum ContributionModel
{
    /// <summary>The reference standard: its certificate (U, k) and its drift since its calibration date.</summary>
    Reference,
    /// <summary>The comparator: its quantization when the readings do not dither it, and its stated systematic error.</summary>
    Resolution,
    /// <summary>The run's readings: mean and Type A by the stability-based estimator.</summary>
    TypeA,
    /// <summary>The acceleration sensitivity and the budget's posture policy (in-use prediction).</summary>
    Orientation,
    /// <summary>Temperature coefficient times the run's recorded variation (calibration) or the band of use (in-use).</summary>
    Temperature,
    /// <summary>Aging over the prediction's hold period: from the instrument's aging fit, else its specification (in-use).</summary>
    Aging,
    /// <summary>The specified retrace (in-use).</summary>
    Retrace,
    /// <summary>Supply sensitivity, stated in the template as a half-width (in-use).</summary>
    Supply,
    /// <summary>Anything else, with a distribution stated in the template.</summary>
    Other,
    /// <summary>Warm-up: the instrument powered for less than its specified warm-up before the run (calibration).</summary>
    WarmUp,
}

/// <summary>Which of a budget's two results a line belongs to (../shared/DOMAIN.md, "Two results").</summary>
public enum BudgetStage
{
    /// <summary>The calibration result: what disperses the mean offset over the run, in the posture and conditions of calibration, on that date.</summary>
    Calibration,
    /// <summary>The in-use prediction: the calibration result carried over a hold period and the conditions of use.</summary>
    InUse,
}

/// <summary>Which stages each model may stand in, and its default.</summary>
public static class BudgetStages
{
    /// <summary>The stages <paramref name="model"/> may be in; the first is its default.</summary>
    public static IReadOnlyList<BudgetStage> Allowed(ContributionModel model) => model switch
    {
        ContributionModel.Reference or ContributionModel.Resolution or ContributionModel.TypeA or ContributionModel.WarmUp => [BudgetStage.Calibration],
        ContributionModel.Orientation or ContributionModel.Aging or ContributionModel.Retrace or ContributionModel.Supply => [BudgetStage.InUse],
        _ => [BudgetStage.Calibration, BudgetStage.InUse],
    };

    /// <summary>Why a model may not stand in a stage, in words.</summary>
    public static string Why(ContributionModel model) => model switch
    {
        ContributionModel.Aging => "aging after the calibration date is not dispersion of the value on that date (ILAC-P14): it belongs to the in-use prediction",
        ContributionModel.Orientation => "the calibration result is for the calibration posture; a posture of use belongs to the in-use prediction",
        ContributionModel.Retrace or ContributionModel.Supply => "retrace and supply changes after the run belong to the in-use prediction",
        _ => "it describes the run itself, so it belongs to the calibration result",
    };
}

/// <summary>What a warm-up line does when the instrument was powered for less than its specified warm-up (or the time was not recorded).</summary>
public enum WarmUpRule
{
    /// <summary>The budget is refused (422): recalibrate after the warm-up.</summary>
    Refuse,
    /// <summary>A stated rectangular line of the template's half-width.</summary>
    Line,
}

/// <summary>The posture of use a budget allows for, against the calibration posture.</summary>
/// <param name="Kind">"as-calibrated", "known", "tilt-limit" or "any".</param>
/// <param name="UseUp">For "known": the up vector of use in the body frame.</param>
/// <param name="TiltLimitDegrees">For "tilt-limit": the largest angle from the calibration posture, 0 to 180.</param>
public sealed record PosturePolicy(string Kind, Vector3D? UseUp = null, double? TiltLimitDegrees = null)
{
    /// <summary>The kinds.</summary>
    public static IReadOnlyList<string> Kinds { get; } = ["as-calibrated", "known", "tilt-limit", "any"];
}

/// <summary>The reference standard as its certificate states it.</summary>
/// <param name="Identity">Its identity.</param>
/// <param name="CertificateNumber">Its certificate.</param>
/// <param name="CalibrationDate">When it was calibrated.</param>
/// <param name="FractionalOffset">Its certified offset.</param>
/// <param name="ExpandedUncertainty">U of that offset.</param>
/// <param name="CoverageFactor">k of U.</param>
/// <param name="DriftPerDay">Drift per day since calibration.</param>
/// <param name="DriftUncertaintyPerDay">Standard uncertainty of the drift rate, per day.</param>
public sealed record ReferenceInputs(string Identity, string CertificateNumber, DateTimeOffset CalibrationDate, double FractionalOffset,
    double ExpandedUncertainty, double CoverageFactor, double DriftPerDay, double DriftUncertaintyPerDay);

/// <summary>The instrument's timebase specification (absent values were not specified).</summary>
/// <param name="TemperatureCoefficientPerKelvin">Fractional change per kelvin.</param>
/// <param name="AgingPerDay">Aging rate per day.</param>
/// <param name="AgingPerYear">Aging per year.</param>
/// <param name="AccelerationSensitivityPerG">|Gamma| per g.</param>
/// <param name="Retrace">Retrace, fractional.</param>
/// <param name="Measured">The latest measured acceleration-sensitivity vector, when a tip-over test has been made.</param>
/// <param name="WarmUpMinutes">The specified warm-up, minutes.</param>
/// <param name="AgingFit">The instrument's aging fitted from its dated results since its last adjustment, when there are enough.</param>
public sealed record SpecificationInputs(double? TemperatureCoefficientPerKelvin, double? AgingPerDay, double? AgingPerYear,
    double? AccelerationSensitivityPerG, double? Retrace, MeasuredSensitivity? Measured = null, double? WarmUpMinutes = null, AgingHistory? AgingFit = null);

/// <summary>A linear aging fit of an instrument's dated results.</summary>
/// <param name="RatePerDay">The fitted drift per day.</param>
/// <param name="RateStandardUncertainty">Its standard uncertainty.</param>
/// <param name="ResidualStandardDeviation">The scatter of the results about the line (added to a prediction).</param>
/// <param name="DegreesOfFreedom">n - 2.</param>
/// <param name="Points">How many results.</param>
/// <param name="Since">The first result fitted (after the last adjustment).</param>
public sealed record AgingHistory(double RatePerDay, double RateStandardUncertainty, double ResidualStandardDeviation, int DegreesOfFreedom, int Points, DateTimeOffset Since);

/// <summary>An acceleration-sensitivity vector measured by a tip-over test.</summary>
/// <param name="TestId">The test's id.</param>
/// <param name="Gamma">Gamma per g in the body frame.</param>
/// <param name="Covariance">Its covariance (from the residuals, or the weights scaled by the Birge ratio), when known.</param>
/// <param name="TestedAt">When the test was fitted.</param>
/// <param name="DegreesOfFreedom">n - 4 of the fit, carried into every line that uses the covariance.</param>
public sealed record MeasuredSensitivity(long TestId, Vector3D Gamma, double[,]? Covariance, DateTimeOffset TestedAt, int DegreesOfFreedom = 0);

/// <summary>The calibration run.</summary>
/// <param name="StartedAt">When it started (the reference's drift runs to this time).</param>
/// <param name="GateTimeSeconds">Gate time of a reading (tau0 of the readings).</param>
/// <param name="ComparatorResolution">Resolution at the gate time, fractional.</param>
/// <param name="CalibrationUp">The calibration posture.</param>
/// <param name="Readings">Fractional offsets of the readings, or empty when none are uploaded.</param>
/// <param name="TemperatureVariationKelvin">The ambient temperature's recorded variation over the run (half range), K.</param>
/// <param name="WarmUpMinutes">How long the instrument had been powered when the run started, minutes, when recorded.</param>
/// <param name="ComparatorSystematic">The comparator's stated systematic error (trigger, interpolator), fractional half-width, when specified.</param>
public sealed record RunInputs(DateTimeOffset StartedAt, double GateTimeSeconds, double ComparatorResolution, Posture CalibrationUp, ReadOnlyMemory<double> Readings,
    double? TemperatureVariationKelvin = null, double? WarmUpMinutes = null, double? ComparatorSystematic = null);

/// <summary>The conditions the in-use prediction is made for.</summary>
/// <param name="HoldDays">The hold period after calibration, days.</param>
/// <param name="Posture">The posture policy of use.</param>
public sealed record UseConditions(double HoldDays, PosturePolicy Posture);

/// <summary>One template contribution with its model's settings.</summary>
/// <param name="Name">Its name in the budget.</param>
/// <param name="Model">How its value is obtained.</param>
/// <param name="Stage">Which result it belongs to.</param>
/// <param name="BandKelvin">Temperature in use: the band between calibration and use, K.</param>
/// <param name="Distribution">Supply, other: the stated distribution ("rectangular" for supply).</param>
/// <param name="HalfWidth">Supply, other, warm-up (its line when short): the half-width.</param>
/// <param name="StandardUncertainty">Other: the standard uncertainty (normal).</param>
/// <param name="WhenShort">Warm-up: what a short or unrecorded warm-up does.</param>
public sealed record TemplateContribution(string Name, ContributionModel Model, BudgetStage Stage = BudgetStage.Calibration, double? BandKelvin = null,
    DistributionKind? Distribution = null, double? HalfWidth = null, double? StandardUncertainty = null, WarmUpRule? WhenShort = null);

/// <summary>A budget line as built: the distribution's parameters and where each came from.</summary>
/// <param name="Name">The contribution's name.</param>
/// <param name="Model">Its model.</param>
/// <param name="Estimate">x_i (a correction, or the measured mean for Type A).</param>
/// <param name="Distribution">Its distribution.</param>
/// <param name="HalfWidth">For bounded distributions.</param>
/// <param name="StandardUncertainty">For the normal distribution.</param>
/// <param name="DegreesOfFreedom">nu_i, infinite when not stated.</param>
/// <param name="Type">A or B.</param>
/// <param name="Source">Where the values came from and the arithmetic, in words and numbers.</param>
/// <param name="Stage">Which result it belongs to.</param>
public sealed record BudgetLine(string Name, ContributionModel Model, double Estimate, DistributionKind Distribution, double? HalfWidth,
    double? StandardUncertainty, double DegreesOfFreedom, EvaluationType Type, string Source, BudgetStage Stage = BudgetStage.Calibration);

/// <summary>
/// The timebase budget's models: each turns the run, its reference, the instrument's specification and the conditions of
/// use into one line of one of the budget's two results. The measurand is the instrument's fractional frequency offset
/// y = y_measured + y_reference + the corrections (a reference that is high by e makes the counter read low by e, to first
/// order). Calibration lines disperse the mean over the run on the calibration date; in-use lines carry that result over
/// the hold period and the conditions of use. A model that lacks what it needs throws a <see cref="MetrologyException"/>
/// naming the contribution (or the run's field).
/// </summary>
public static class TimebaseBudget
{
    /// <summary>The line of one template contribution; null when the posture policy leaves no orientation term.</summary>
    public static BudgetLine? Build(TemplateContribution c, RunInputs run, ReferenceInputs reference, SpecificationInputs spec, UseConditions use)
    {
        ArgumentNullException.ThrowIfNull(c);
        ArgumentNullException.ThrowIfNull(run);
        ArgumentNullException.ThrowIfNull(reference);
        ArgumentNullException.ThrowIfNull(spec);
        ArgumentNullException.ThrowIfNull(use);
        if (!BudgetStages.Allowed(c.Model).Contains(c.Stage))
        {
            throw new MetrologyException(c.Name, $"The '{c.Name}' line cannot be in the {(c.Stage == BudgetStage.Calibration ? "calibration result" : "in-use prediction")}: {BudgetStages.Why(c.Model)}.");
        }

        var line = c.Model switch
        {
            ContributionModel.Reference => Reference(c, run, reference),
            ContributionModel.Resolution => Comparator(c, run),
            ContributionModel.TypeA => TypeA(c, run),
            ContributionModel.Orientation => Orientation(c, run, spec, use.Posture),
            ContributionModel.Temperature => Temperature(c, run, spec),
            ContributionModel.Aging => Aging(c, spec, use),
            ContributionModel.Retrace => Rectangular(c, spec.Retrace ?? throw Needs(c, "timebase.specification.retrace"),
                string.Create(Inv, $"specified retrace after a power cycle {spec.Retrace:G4}")),
            ContributionModel.Supply => Rectangular(c, c.HalfWidth ?? 0, string.Create(Inv, $"supply sensitivity stated by the template: half-width {c.HalfWidth:G4}")),
            ContributionModel.WarmUp => WarmUp(c, run, spec),
            ContributionModel.Other => Other(c),
            _ => throw new ArgumentOutOfRangeException(nameof(c), c.Model, "Unknown model."),
        };
        return line is null ? null : line with { Stage = c.Stage };
    }

    private static readonly CultureInfo Inv = CultureInfo.InvariantCulture;

    // y_ref(t) = y_cert + D (t - t_cal); u^2 = (U/k)^2 + (u_D (t - t_cal))^2. A drift recorded without its uncertainty gets
    // u_D = |D| / sqrt(3) (the rate anywhere between 0 and 2D), never zero.
    private static BudgetLine Reference(TemplateContribution c, RunInputs run, ReferenceInputs reference)
    {
        double days = (run.StartedAt - reference.CalibrationDate).TotalDays;
        double estimate = reference.FractionalOffset + reference.DriftPerDay * days;
        double uCert = reference.ExpandedUncertainty / reference.CoverageFactor;
        bool bounded = reference.DriftPerDay != 0 && reference.DriftUncertaintyPerDay == 0;
        double uRate = bounded ? Math.Abs(reference.DriftPerDay) / Math.Sqrt(3) : reference.DriftUncertaintyPerDay;
        double uDrift = uRate * days;
        double u = Math.Sqrt(uCert * uCert + uDrift * uDrift);
        string rate = bounded
            ? string.Create(Inv, $"the drift was recorded without its uncertainty, so the conservative bound u_D = |D|/sqrt(3) = {uRate:G4}/day is used")
            : string.Create(Inv, $"u_D = {uRate:G4}/day");
        return new BudgetLine(c.Name, c.Model, estimate, DistributionKind.Normal, null, u, double.PositiveInfinity, EvaluationType.B, string.Create(Inv,
            $"reference {reference.Identity}, certificate {reference.CertificateNumber}: offset {reference.FractionalOffset:G6} + drift {reference.DriftPerDay:G4}/day x {days:F2} days = {estimate:G6}; {rate}; u = sqrt(({reference.ExpandedUncertainty:G4}/{reference.CoverageFactor:G4})^2 + ({uRate:G4} x {days:F2})^2) = {u:G6}"));
    }

    /// <summary>
    /// The comparator term, defined so that nothing is counted twice with Type A. "Resolution" is the counter's
    /// quantization step delta at the gate time, as a fractional frequency. When the readings scatter by at least delta
    /// (their standard deviation s &gt;= delta) the quantization error varies from reading to reading and is already in the
    /// readings' scatter, so in Type A; when they do not (s &lt; delta, or no readings), it can be common to every reading
    /// and does not average out: rectangular, half-width delta / 2. Random trigger and interpolator noise is in the
    /// readings' scatter (Type A) and is never added here; a stated systematic error (trigger level, interpolator
    /// nonlinearity) does not average and is added as its half-width. Both present: the half-widths add (a conservative bound).
    /// </summary>
    private static BudgetLine Comparator(TemplateContribution c, RunInputs run)
    {
        double delta = run.ComparatorResolution;
        var y = run.Readings.Span;
        double s = StandardDeviation(y);
        bool dithered = y.Length >= 2 && s >= delta;
        double quantization = dithered ? 0 : delta / 2;
        double systematic = run.ComparatorSystematic ?? 0;
        double a = quantization + systematic;
        string q = dithered
            ? string.Create(Inv, $"the readings scatter by s = {s:G3} >= the resolution {delta:G4}, so quantization varies from reading to reading and is in Type A")
            : string.Create(Inv, $"resolution {delta:G4} at the gate time {run.GateTimeSeconds:G4} s{(y.Length >= 2 ? string.Create(Inv, $" exceeds the readings' scatter s = {s:G3}") : "")}, so quantization may be common to every reading: half-width {delta:G4}/2 = {quantization:G6}");
        string sys = run.ComparatorSystematic is double e ? string.Create(Inv, $"; stated systematic error (trigger, interpolator) {e:G4}") : "; no systematic error stated";
        return Rectangular(c, a, string.Create(Inv, $"{q}{sys}; rectangular, half-width {a:G6} (random trigger and interpolator noise is in Type A)"));
    }

    private static BudgetLine TypeA(TemplateContribution c, RunInputs run)
    {
        if (run.Readings.Length < 2)
        {
            throw new MetrologyException(c.Name, "The run has no readings (or one): the Type A term needs the run's readings.") { NotComputable = true };
        }

        var a = TimebaseTypeA.Evaluate(run.Readings, run.GateTimeSeconds);
        // a finite nu makes the input a scaled and shifted t (JCGM 101 6.4.9) for the Monte Carlo run
        var kind = double.IsFinite(a.DegreesOfFreedom) ? DistributionKind.StudentT : DistributionKind.Normal;
        return new BudgetLine(c.Name, c.Model, a.Mean, kind, null, a.StandardUncertainty, a.DegreesOfFreedom, EvaluationType.A,
            string.Create(Inv, $"{a.Count} readings of {run.GateTimeSeconds:G4} s: mean {a.Mean:G8}; {a.Estimator}: u = {a.StandardUncertainty:G6}, nu = {a.DegreesOfFreedom:G6} ({a.Reason})"));
    }

    private static BudgetLine Temperature(TemplateContribution c, RunInputs run, SpecificationInputs spec)
    {
        double tc = spec.TemperatureCoefficientPerKelvin ?? throw Needs(c, "timebase.specification.temperatureCoefficientPerKelvin");
        if (c.Stage == BudgetStage.Calibration)
        {
            double dt = run.TemperatureVariationKelvin ?? throw new MetrologyException("run.environment.temperatureVariationKelvin",
                $"The template's '{c.Name}' needs the run's recorded temperature variation (environment.temperatureVariationKelvin), which was not recorded.") { NotComputable = true };
            double w = Math.Abs(tc) * dt;
            return Rectangular(c, w, string.Create(Inv, $"temperature coefficient {tc:G4}/K x the run's recorded variation {dt:G4} K = {w:G6}"));
        }

        double band = c.BandKelvin ?? 0;
        double a = Math.Abs(tc) * band;
        return Rectangular(c, a, string.Create(Inv, $"temperature coefficient {tc:G4}/K x band {band:G4} K between calibration and use = {a:G6}"));
    }

    // From the instrument's fit: the predicted drift D x hold as a correction, u^2 = (u_D hold)^2 + s_res^2 on the fit's
    // n - 2 degrees of freedom. Else the specified rate as a bound of unknown sign: rectangular, half-width |rate| x hold.
    private static BudgetLine Aging(TemplateContribution c, SpecificationInputs spec, UseConditions use)
    {
        double hold = use.HoldDays;
        if (spec.AgingFit is { } fit)
        {
            double drift = fit.RatePerDay * hold;
            double uRate = fit.RateStandardUncertainty * hold;
            double u = Math.Sqrt(uRate * uRate + fit.ResidualStandardDeviation * fit.ResidualStandardDeviation);
            return new BudgetLine(c.Name, c.Model, drift, DistributionKind.Normal, null, u, Math.Max(fit.DegreesOfFreedom, 1), EvaluationType.B, string.Create(Inv,
                $"the instrument's aging fit ({fit.Points} results since {fit.Since:yyyy-MM-dd}): {fit.RatePerDay:G4}/day x {hold:G6} days = {drift:G6}; u = sqrt(({fit.RateStandardUncertainty:G4} x {hold:G6})^2 + residual scatter {fit.ResidualStandardDeviation:G4}^2) = {u:G6}, nu = {Math.Max(fit.DegreesOfFreedom, 1)}"));
        }

        double a = spec.AgingPerDay is double perDay ? Math.Abs(perDay) * hold
            : spec.AgingPerYear is double perYear ? Math.Abs(perYear) * hold / 365.25
            : throw Needs(c, "timebase.specification.agingPerDay");
        string rate = spec.AgingPerDay is double d ? string.Create(Inv, $"{d:G4}/day x {hold:G6} days") : string.Create(Inv, $"{spec.AgingPerYear:G4}/year x {hold:G6}/365.25 years");
        return Rectangular(c, a, string.Create(Inv, $"specified aging {rate} of the hold period (no aging fit of the instrument's results) = {a:G6}"));
    }

    private static BudgetLine WarmUp(TemplateContribution c, RunInputs run, SpecificationInputs spec)
    {
        if (spec.WarmUpMinutes is not double need)
        {
            return Rectangular(c, 0, run.WarmUpMinutes is double p
                ? string.Create(Inv, $"powered {p:G6} min before the run; the instrument's specification states no warm-up to compare with: no term")
                : "the specification states no warm-up and the power-on time was not recorded: no term");
        }

        if (run.WarmUpMinutes is double had && had >= need)
        {
            return Rectangular(c, 0, string.Create(Inv, $"powered {had:G6} min before the run, at least the specified warm-up of {need:G6} min: no term"));
        }

        string what = run.WarmUpMinutes is double h
            ? string.Create(Inv, $"powered only {h:G6} min before the run, less than the specified warm-up of {need:G6} min")
            : string.Create(Inv, $"the power-on time before the run was not recorded (specified warm-up {need:G6} min)");
        if (c.WhenShort != WarmUpRule.Line)
        {
            throw new MetrologyException("run.warmUpMinutes", $"The instrument was {what}; the template refuses a budget for it: run again after the warm-up, or record the power-on time.") { NotComputable = true };
        }

        double a = c.HalfWidth ?? 0;
        return Rectangular(c, a, string.Create(Inv, $"{what}: the template's stated term, rectangular, half-width {a:G4}"));
    }

    private static BudgetLine Other(TemplateContribution c)
    {
        var kind = c.Distribution ?? DistributionKind.Rectangular;
        return kind == DistributionKind.Normal
            ? new BudgetLine(c.Name, c.Model, 0, kind, null, c.StandardUncertainty ?? 0, double.PositiveInfinity, EvaluationType.B,
                string.Create(Inv, $"stated by the template: normal, u = {c.StandardUncertainty:G4}"))
            : new BudgetLine(c.Name, c.Model, 0, kind, c.HalfWidth ?? 0, null, double.PositiveInfinity, EvaluationType.B,
                string.Create(Inv, $"stated by the template: {kind}, half-width {c.HalfWidth:G4}"));
    }

    // Only the magnitude |Gamma| is known from the specification, not its direction: the shift between two postures is
    // bounded by |Gamma| |up_use - up_cal| (in g), and taken as rectangular within that bound (common practice). The chord
    // between postures a tilt theta apart is 2 sin(theta / 2): 2 for a full turn-over, the "2 g tip-over".
    private static BudgetLine? Orientation(TemplateContribution c, RunInputs run, SpecificationInputs spec, PosturePolicy posture)
    {
        if (posture.Kind == "as-calibrated")
        {
            return null;
        }

        if (spec.Measured is { Covariance: not null, DegreesOfFreedom: > 0 } m)
        {
            return Measured(c, run, m, posture);
        }

        string why = spec.Measured is { } t
            ? string.Create(Inv, $"tip-over test {t.TestId} has no residual degrees of freedom (four postures), so its Gamma's uncertainty is unknown and the specified bound is used; ")
            : "";
        double gamma = spec.AccelerationSensitivityPerG ?? throw Needs(c, "timebase.specification.accelerationSensitivityPerG");
        double chord;
        string how;
        switch (posture.Kind)
        {
            case "known":
                var use = posture.UseUp ?? throw new MetrologyException("posturePolicy.useUp", "A known posture of use needs its up vector.");
                chord = (Posture.FromVector(use).Up - run.CalibrationUp.Up).Length;
                how = string.Create(Inv, $"known posture of use {Posture.FromVector(use).Up}, |up_use - up_cal| = {chord:G6} g");
                break;
            case "tilt-limit":
                double theta = posture.TiltLimitDegrees ?? throw new MetrologyException("posturePolicy.tiltLimitDegrees", "A tilt limit needs its angle.");
                chord = 2 * Math.Sin(theta * Math.PI / 360);
                how = string.Create(Inv, $"within {theta:G4} degrees of the calibration posture, chord 2 sin({theta:G4}/2) = {chord:G6} g");
                break;
            default:
                chord = 2;
                how = "any orientation: at most a full turn-over, 2 g";
                break;
        }

        double a = gamma * chord;
        return Rectangular(c, a, string.Create(Inv, $"{why}specified |Gamma| {gamma:G4}/g, direction unknown; {how}; half-width {gamma:G4} x {chord:G6} = {a:G6}"));
    }

    // With a measured vector: for a known posture of use, the correction Gamma . (up_use - up_cal) with u from the
    // covariance; within a tilt limit or in any orientation, the exact mean and standard deviation of the shift over the
    // cap (postures uniform by area) with u(Gamma) added. nu by Welch-Satterthwaite from the test's n - 4 (the geometry's
    // part is exact).
    private static BudgetLine Measured(TemplateContribution c, RunInputs run, MeasuredSensitivity m, PosturePolicy posture)
    {
        string vector = string.Create(Inv, $"measured Gamma {m.Gamma} per g (tip-over test {m.TestId}, {m.TestedAt:yyyy-MM-dd}, nu = {m.DegreesOfFreedom})");
        if (posture.Kind == "known")
        {
            var use = Posture.FromVector(posture.UseUp ?? throw new MetrologyException("posturePolicy.useUp", "A known posture of use needs its up vector."));
            var known = OrientationShift.Known(m.Gamma, run.CalibrationUp, use, m.Covariance);
            return new BudgetLine(c.Name, c.Model, known.Shift ?? 0, DistributionKind.Normal, null, known.StandardUncertainty, m.DegreesOfFreedom, EvaluationType.B,
                string.Create(Inv, $"{vector}; posture of use {use.Up}: correction Gamma . (up_use - up_cal) = {known.Shift:G6}, u from the covariance {known.StandardUncertainty:G6}"));
        }

        double theta = posture.Kind == "tilt-limit"
            ? posture.TiltLimitDegrees ?? throw new MetrologyException("posturePolicy.tiltLimitDegrees", "A tilt limit needs its angle.")
            : 180;
        var cap = OrientationShift.OverCap(m.Gamma, run.CalibrationUp, theta, m.Covariance);
        double g4 = Math.Pow(cap.GammaStandardUncertainty, 4);
        double nu = g4 > 0 ? Math.Pow(cap.StandardUncertainty, 4) / (g4 / m.DegreesOfFreedom) : double.PositiveInfinity;
        string where = posture.Kind == "tilt-limit" ? string.Create(Inv, $"postures uniform within {theta:G4} degrees of the calibration posture") : "any orientation, postures uniform over the sphere";
        return new BudgetLine(c.Name, c.Model, cap.Mean, DistributionKind.Normal, null, cap.StandardUncertainty, nu, EvaluationType.B, string.Create(Inv,
            $"{vector}; {where}: mean shift {cap.Mean:G6}, standard deviation over the postures {cap.GeometricStandardDeviation:G6}, u(Gamma) adds {cap.GammaStandardUncertainty:G6}: u = {cap.StandardUncertainty:G6}, nu = {nu:G4} (largest |shift| {cap.HalfWidth:G6})"));
    }

    private static double StandardDeviation(ReadOnlySpan<double> y)
    {
        double sum = 0;
        int n = 0;
        foreach (double v in y)
        {
            if (!double.IsNaN(v))
            {
                sum += v;
                n++;
            }
        }

        if (n < 2)
        {
            return 0;
        }

        double mean = sum / n, ss = 0;
        foreach (double v in y)
        {
            if (!double.IsNaN(v))
            {
                ss += (v - mean) * (v - mean);
            }
        }

        return Math.Sqrt(ss / (n - 1));
    }

    private static BudgetLine Rectangular(TemplateContribution c, double halfWidth, string source) =>
        new(c.Name, c.Model, 0, DistributionKind.Rectangular, halfWidth, null, double.PositiveInfinity, EvaluationType.B, source);

    private static MetrologyException Needs(TemplateContribution c, string field) =>
        new(c.Name, $"The template's '{c.Name}' needs the instrument's {field}, which is not specified; give it, or override the contribution with a reason.") { NotComputable = true };
}
