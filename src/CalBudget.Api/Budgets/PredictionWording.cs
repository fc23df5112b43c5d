using System.Globalization;
using CalBudget.Core.Budgets;
using CalBudget.Core.Gum;
using CalBudget.Data.Calibrations;
using CalBudget.Api.Instruments;

namespace CalBudget.Api.Budgets;

/// <summary>The in-use prediction's assumptions and its labelled statement, in words (stored with the version, printed on the certificate).</summary>
public static class PredictionWording
{
    private static readonly CultureInfo C = CultureInfo.InvariantCulture;

    /// <summary>Every assumption the prediction rests on, one phrase each.</summary>
    public static IReadOnlyList<string> Assumptions(BudgetTemplate template, IReadOnlyList<BudgetLineDto> lines, PosturePolicy policy, CalibrationRunFields run,
        TimebaseSpecificationDto spec, AgingHistory? aging, DateTimeOffset until, IReadOnlyList<Data.Instruments.NamedPosture>? postures = null)
    {
        ArgumentNullException.ThrowIfNull(template);
        ArgumentNullException.ThrowIfNull(lines);
        ArgumentNullException.ThrowIfNull(policy);
        ArgumentNullException.ThrowIfNull(run);
        ArgumentNullException.ThrowIfNull(spec);
        var inUse = template.Contributions.Where(c => c.Stage == BudgetStage.InUse && lines.Any(l => l.Name == c.Name)).ToArray();
        bool Has(ContributionModel m) => inUse.Any(c => c.Model == m);
        var words = new List<string> { $"until {until:yyyy-MM-dd} ({template.HoldDays.ToString("G6", C)} days after calibration)" };
        words.Add(policy.Kind switch
        {
            "known" => $"in the posture of use {Named(policy.UseUp!.Value, postures)}with up vector ({Vec(policy.UseUp!.Value)}), its shift from the calibration posture corrected",
            "tilt-limit" => $"within {policy.TiltLimitDegrees!.Value.ToString("G4", C)}° of the calibration posture",
            "any" => "in any orientation",
            _ => "in the calibration posture",
        });
        if (inUse.FirstOrDefault(c => c.Model == ContributionModel.Temperature) is { BandKelvin: double band })
        {
            words.Add(run.Environment.TemperatureCelsius is double t
                ? $"at {t.ToString("0.#", C)} ± {band.ToString("G3", C)} °C"
                : $"within ± {band.ToString("G3", C)} K of the calibration temperature");
        }
        else
        {
            words.Add("at the temperature of calibration");
        }

        if (Has(ContributionModel.Aging))
        {
            words.Add(aging is { } a
                ? $"aging as fitted to the instrument's {a.Points} results since {a.Since:yyyy-MM-dd} ({Notation.Uncertainty(a.RatePerDay)} per day)"
                : spec.AgingPerDay is double d ? $"aging within the specified {Notation.Uncertainty(Math.Abs(d))} per day, sign unknown"
                : $"aging within the specified {Notation.Uncertainty(Math.Abs(spec.AgingPerYear ?? 0))} per year, sign unknown");
        }

        words.Add(Has(ContributionModel.Retrace) ? "after at most one power cycle (the specified retrace)" : "without a power cycle");
        if (Has(ContributionModel.Supply))
        {
            words.Add("with supply changes within the template's stated bound");
        }

        return words;
    }

    /// <summary>The prediction as one sentence, labelled as a prediction and never as the uncertainty of the result.</summary>
    public static string Statement(EvaluateResponse predicted, IReadOnlyList<string> assumptions)
    {
        ArgumentNullException.ThrowIfNull(predicted);
        ArgumentNullException.ThrowIfNull(assumptions);
        var rounded = StatementRounding.Round(predicted.Estimate, predicted.ExpandedUncertainty);
        return $"In-use prediction (not the uncertainty of the calibration result): {rounded.ToScientific()} (k = {predicted.CoverageFactor.ToString("0.00", C)}, " +
            $"about {(predicted.CoverageProbability * 100).ToString("0.##", C)} %), {string.Join(", ", assumptions)}.";
    }

    // the instrument's own name for a posture of use, when one of its postures has that up vector
    private static string Named(Core.Orientation.Vector3D up, IReadOnlyList<Data.Instruments.NamedPosture>? postures)
    {
        var unit = Core.Orientation.Posture.FromVector(up).Up;
        var match = postures?.FirstOrDefault(p => (Core.Orientation.Posture.FromVector(new Core.Orientation.Vector3D(p.X, p.Y, p.Z)).Up - unit).Length < 1e-9);
        return match is null ? "" : $"'{match.Name}' ";
    }

    private static string Vec(Core.Orientation.Vector3D v) => $"{(v.X + 0.0).ToString("0.###", C)}, {(v.Y + 0.0).ToString("0.###", C)}, {(v.Z + 0.0).ToString("0.###", C)}";
}
