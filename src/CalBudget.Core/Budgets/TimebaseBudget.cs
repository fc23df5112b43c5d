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
    /// <summary>The comparator's resolution at the gate time: rectangular, half-width half the resolution.</summary>
    Resolution,
    /// <summary>The run's readings: mean and Type A by the stability-based estimator.</summary>
    TypeA,
    /// <summary>The acceleration sensitivity and the budget's posture policy.</summary>
    Orientation,
    /// <summary>Temperature coefficient times the band between calibration and use.</summary>
    Temperature,
    /// <summary>Aging rate times the period the result must hold for.</summary>
    Aging,
    /// <summary>The specified retrace.</summary>
    Retrace,
    /// <summary>Supply sensitivity, stated in the template as a half-width.</summary>
    Supply,
    /// <summary>Anything else, with a distribution stated in the template.</summary>
    Other,
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
public sealed record SpecificationInputs(double? TemperatureCoefficientPerKelvin, double? AgingPerDay, double? AgingPerYear,
    double? AccelerationSensitivityPerG, double? Retrace, MeasuredSensitivity? Measured = null);

/// <summary>An acceleration-sensitivity vector measured by a tip-over test.</summary>
/// <param name="TestId">The test's id.</param>
/// <param name="Gamma">Gamma per g in the body frame.</param>
/// <param name="Covariance">Its covariance, when known.</param>
/// <param name="TestedAt">When the test was fitted.</param>
public sealed record MeasuredSensitivity(long TestId, Vector3D Gamma, double[,]? Covariance, DateTimeOffset TestedAt);

/// <summary>The calibration run.</summary>
/// <param name="StartedAt">When it started (the reference's drift runs to this time).</param>
/// <param name="GateTimeSeconds">Gate time of a reading (tau0 of the readings).</param>
/// <param name="ComparatorResolution">Resolution at the gate time, fractional.</param>
/// <param name="CalibrationUp">The calibration posture.</param>
/// <param name="Readings">Fractional offsets of the readings, or empty when none are uploaded.</param>
public sealed record RunInputs(DateTimeOffset StartedAt, double GateTimeSeconds, double ComparatorResolution, Posture CalibrationUp, ReadOnlyMemory<double> Readings);

/// <summary>One template contribution with its model's settings.</summary>
/// <param name="Name">Its name in the budget.</param>
/// <param name="Model">How its value is obtained.</param>
/// <param name="BandKelvin">Temperature: the band between calibration and use, K.</param>
/// <param name="HoldDays">Aging: the period the result must hold for, days.</param>
/// <param name="Distribution">Supply, other: the stated distribution ("rectangular" for supply).</param>
/// <param name="HalfWidth">Supply, other: the half-width.</param>
/// <param name="StandardUncertainty">Other: the standard uncertainty (normal).</param>
public sealed record TemplateContribution(string Name, ContributionModel Model, double? BandKelvin = null, double? HoldDays = null,
    DistributionKind? Distribution = null, double? HalfWidth = null, double? StandardUncertainty = null);

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
public sealed record BudgetLine(string Name, ContributionModel Model, double Estimate, DistributionKind Distribution, double? HalfWidth,
    double? StandardUncertainty, double DegreesOfFreedom, EvaluationType Type, string Source);

/// <summary>
/// The timebase budget's models: each turns the run, its reference, the instrument's specification and the posture policy
/// into one line. The measurand is the instrument's fractional frequency offset y = y_measured + y_reference + the
/// corrections (a reference that is high by e makes the counter read low by e, to first order). A model that lacks what it
/// needs throws a <see cref="MetrologyException"/> naming the contribution.
/// </summary>
public static class TimebaseBudget
{
    /// <summary>The line of one template contribution.</summary>
    public static BudgetLine? Build(TemplateContribution c, RunInputs run, ReferenceInputs reference, SpecificationInputs spec, PosturePolicy posture)
    {
        ArgumentNullException.ThrowIfNull(c);
        ArgumentNullException.ThrowIfNull(run);
        ArgumentNullException.ThrowIfNull(reference);
        ArgumentNullException.ThrowIfNull(spec);
        ArgumentNullException.ThrowIfNull(posture);
        var inv = CultureInfo.InvariantCulture;
        switch (c.Model)
        {
            case ContributionModel.Reference:
            {
                // y_ref(t) = y_cert + D (t - t_cal); u^2 = (U/k)^2 + (u_D (t - t_cal))^2
                double days = (run.StartedAt - reference.CalibrationDate).TotalDays;
                double estimate = reference.FractionalOffset + reference.DriftPerDay * days;
                double uCert = reference.ExpandedUncertainty / reference.CoverageFactor;
                double uDrift = reference.DriftUncertaintyPerDay * days;
                double u = Math.Sqrt(uCert * uCert + uDrift * uDrift);
                return new BudgetLine(c.Name, c.Model, estimate, DistributionKind.Normal, null, u, double.PositiveInfinity, EvaluationType.B, string.Create(inv,
                    $"reference {reference.Identity}, certificate {reference.CertificateNumber}: offset {reference.FractionalOffset:G6} + drift {reference.DriftPerDay:G4}/day x {days:F2} days = {estimate:G6}; u = sqrt(({reference.ExpandedUncertainty:G4}/{reference.CoverageFactor:G4})^2 + ({reference.DriftUncertaintyPerDay:G4} x {days:F2})^2) = {u:G6}"));
            }

            case ContributionModel.Resolution:
            {
                double a = run.ComparatorResolution / 2;
                return new BudgetLine(c.Name, c.Model, 0, DistributionKind.Rectangular, a, null, double.PositiveInfinity, EvaluationType.B, string.Create(inv,
                    $"comparator resolution {run.ComparatorResolution:G4} at the gate time {run.GateTimeSeconds:G4} s: rectangular, half-width {run.ComparatorResolution:G4}/2 = {a:G6}"));
            }

            case ContributionModel.TypeA:
            {
                if (run.Readings.Length < 2)
                {
                    throw new MetrologyException(c.Name, "The run has no readings (or one): the Type A term needs the run's readings.") { NotComputable = true };
                }

                var a = TimebaseTypeA.Evaluate(run.Readings, run.GateTimeSeconds);
                return new BudgetLine(c.Name, c.Model, a.Mean, DistributionKind.Normal, null, a.StandardUncertainty, a.DegreesOfFreedom, EvaluationType.A,
                    string.Create(inv, $"{a.Count} readings of {run.GateTimeSeconds:G4} s: mean {a.Mean:G8}; {a.Estimator}: u = {a.StandardUncertainty:G6}, nu = {a.DegreesOfFreedom:G6} ({a.Reason})"));
            }

            case ContributionModel.Orientation:
                return Orientation(c, run, spec, posture);

            case ContributionModel.Temperature:
            {
                double tc = spec.TemperatureCoefficientPerKelvin ?? throw Needs(c, "timebase.specification.temperatureCoefficientPerKelvin");
                double band = c.BandKelvin ?? 0;
                double a = Math.Abs(tc) * band;
                return Rectangular(c, a, string.Create(inv, $"temperature coefficient {tc:G4}/K x band {band:G4} K between calibration and use = {a:G6}"));
            }

            case ContributionModel.Aging:
            {
                double hold = c.HoldDays ?? 0;
                double a = spec.AgingPerDay is double perDay ? Math.Abs(perDay) * hold
                    : spec.AgingPerYear is double perYear ? Math.Abs(perYear) * hold / 365.25
                    : throw Needs(c, "timebase.specification.agingPerDay");
                string rate = spec.AgingPerDay is double d ? string.Create(inv, $"{d:G4}/day x {hold:G6} days") : string.Create(inv, $"{spec.AgingPerYear:G4}/year x {hold:G6}/365.25 years");
                return Rectangular(c, a, string.Create(inv, $"aging {rate} for the period the result holds = {a:G6}"));
            }

            case ContributionModel.Retrace:
            {
                double r = spec.Retrace ?? throw Needs(c, "timebase.specification.retrace");
                return Rectangular(c, r, string.Create(inv, $"specified retrace {r:G4}"));
            }

            case ContributionModel.Supply:
                return Rectangular(c, c.HalfWidth ?? 0, string.Create(inv, $"supply sensitivity stated by the template: half-width {c.HalfWidth:G4}"));

            case ContributionModel.Other:
            {
                var kind = c.Distribution ?? DistributionKind.Rectangular;
                return kind == DistributionKind.Normal
                    ? new BudgetLine(c.Name, c.Model, 0, kind, null, c.StandardUncertainty ?? 0, double.PositiveInfinity, EvaluationType.B,
                        string.Create(inv, $"stated by the template: normal, u = {c.StandardUncertainty:G4}"))
                    : new BudgetLine(c.Name, c.Model, 0, kind, c.HalfWidth ?? 0, null, double.PositiveInfinity, EvaluationType.B,
                        string.Create(inv, $"stated by the template: {kind}, half-width {c.HalfWidth:G4}"));
            }

            default:
                throw new ArgumentOutOfRangeException(nameof(c), c.Model, "Unknown model.");
        }
    }

    // Only the magnitude |Gamma| is known from the specification, not its direction: the shift between two postures is
    // bounded by |Gamma| |up_use - up_cal| (in g), and taken as rectangular within that bound (common practice). The chord
    // between postures a tilt theta apart is 2 sin(theta / 2): 2 for a full turn-over, the "2 g tip-over".
    private static BudgetLine? Orientation(TemplateContribution c, RunInputs run, SpecificationInputs spec, PosturePolicy posture)
    {
        var inv = CultureInfo.InvariantCulture;
        if (posture.Kind == "as-calibrated")
        {
            return null;
        }

        if (spec.Measured is { } m)
        {
            return Measured(c, run, m, posture);
        }

        double gamma = spec.AccelerationSensitivityPerG ?? throw Needs(c, "timebase.specification.accelerationSensitivityPerG");
        double chord;
        string how;
        switch (posture.Kind)
        {
            case "known":
                var use = posture.UseUp ?? throw new MetrologyException("posturePolicy.useUp", "A known posture of use needs its up vector.");
                chord = (Posture.FromVector(use).Up - run.CalibrationUp.Up).Length;
                how = string.Create(inv, $"known posture of use {Posture.FromVector(use).Up}, |up_use - up_cal| = {chord:G6} g");
                break;
            case "tilt-limit":
                double theta = posture.TiltLimitDegrees ?? throw new MetrologyException("posturePolicy.tiltLimitDegrees", "A tilt limit needs its angle.");
                chord = 2 * Math.Sin(theta * Math.PI / 360);
                how = string.Create(inv, $"within {theta:G4} degrees of the calibration posture, chord 2 sin({theta:G4}/2) = {chord:G6} g");
                break;
            default:
                chord = 2;
                how = "any orientation: at most a full turn-over, 2 g";
                break;
        }

        double a = gamma * chord;
        return Rectangular(c, a, string.Create(inv, $"specified |Gamma| {gamma:G4}/g; {how}; half-width {gamma:G4} x {chord:G6} = {a:G6}"));
    }

    // With a measured vector the shift is computed: for a known posture of use, the correction Gamma . (up_use - up_cal)
    // with its standard uncertainty from the covariance (normal); within a tilt limit or in any orientation, the largest
    // |shift| over those postures, exactly (OrientationShift), as the half-width of a rectangular term.
    private static BudgetLine Measured(TemplateContribution c, RunInputs run, MeasuredSensitivity m, PosturePolicy posture)
    {
        var inv = CultureInfo.InvariantCulture;
        string vector = string.Create(inv, $"measured Gamma {m.Gamma} per g (tip-over test {m.TestId}, {m.TestedAt:yyyy-MM-dd})");
        switch (posture.Kind)
        {
            case "known":
                var use = Posture.FromVector(posture.UseUp ?? throw new MetrologyException("posturePolicy.useUp", "A known posture of use needs its up vector."));
                var known = OrientationShift.Known(m.Gamma, run.CalibrationUp, use, m.Covariance);
                return new BudgetLine(c.Name, c.Model, known.Shift ?? 0, DistributionKind.Normal, null, known.StandardUncertainty, double.PositiveInfinity, EvaluationType.B,
                    string.Create(inv, $"{vector}; posture of use {use.Up}: correction Gamma . (up_use - up_cal) = {known.Shift:G6}, u from the covariance {known.StandardUncertainty:G6}"));
            case "tilt-limit":
                double theta = posture.TiltLimitDegrees ?? throw new MetrologyException("posturePolicy.tiltLimitDegrees", "A tilt limit needs its angle.");
                var tilt = OrientationShift.WithinTilt(m.Gamma, run.CalibrationUp, theta, m.Covariance);
                return Rectangular(c, tilt.HalfWidth ?? 0, string.Create(inv, $"{vector}; largest |shift| within {theta:G4} degrees of the calibration posture (at {tilt.WorstPosture.Up}) = {tilt.HalfWidth:G6}"));
            default:
                var any = OrientationShift.AnyOrientation(m.Gamma, run.CalibrationUp, m.Covariance);
                return Rectangular(c, any.HalfWidth ?? 0, string.Create(inv, $"{vector}; largest |shift| in any orientation (at {any.WorstPosture.Up}) = {any.HalfWidth:G6}"));
        }
    }

    private static BudgetLine Rectangular(TemplateContribution c, double halfWidth, string source) =>
        new(c.Name, c.Model, 0, DistributionKind.Rectangular, halfWidth, null, double.PositiveInfinity, EvaluationType.B, source);

    private static MetrologyException Needs(TemplateContribution c, string field) =>
        new(c.Name, $"The template's '{c.Name}' needs the instrument's {field}, which is not specified; give it, or override the contribution with a reason.") { NotComputable = true };
}
