using CalBudget.Core.Budgets;
using CalBudget.Core.Gum;
using CalBudget.Core.Orientation;

namespace CalBudget.Core.Tests.Budgets;

/// <summary>
/// A worked OCXO example written out by hand: every line of the calibration result and of the in-use prediction, from
/// invented run facts (demo-style numbers, not check values), with the arithmetic beside each expected value.
/// </summary>
public class TimebaseBudgetTests
{
    private static readonly DateTimeOffset RunStart = new(2026, 11, 30, 9, 0, 0, TimeSpan.Zero);

    // readings that do not scatter by the resolution (s = 0 < delta): quantization does not average
    private static readonly double[] Steady = Enumerable.Repeat(2e-9, 100).ToArray();

    private static readonly RunInputs Run = new(RunStart, 1, 1e-11, Posture.FromAxis("+z"), Steady, TemperatureVariationKelvin: 0.3, WarmUpMinutes: 20,
        ComparatorSystematic: 2e-12);

    // drift recorded without its uncertainty: the conservative bound applies
    private static readonly ReferenceInputs Reference = new("RB-1", "TL-1", RunStart.AddDays(-200), 1e-12, 2e-12, 2, 1e-14, 0);

    private static readonly SpecificationInputs Spec = new(TemperatureCoefficientPerKelvin: 2e-11, AgingPerDay: 1e-11, AgingPerYear: null,
        AccelerationSensitivityPerG: 1e-9, Retrace: 2e-9, Measured: null, WarmUpMinutes: 60);

    private static readonly UseConditions Use = new(365, new PosturePolicy("tilt-limit", TiltLimitDegrees: 20));

    private static BudgetLine Line(TemplateContribution c, SpecificationInputs? spec = null, RunInputs? run = null, UseConditions? use = null) =>
        TimebaseBudget.Build(c, run ?? Run, Reference, spec ?? Spec, use ?? Use)!;

    [Fact]
    public void TheCalibrationResultHoldsOnlyTheMeasurementsOwnLines()
    {
        // reference: 200 days; y = 1e-12 + 1e-14 x 200 = 3e-12; no drift uncertainty recorded, so u_D = 1e-14 / sqrt 3 per day;
        // u = sqrt((2e-12/2)^2 + (1e-14/sqrt3 x 200)^2) = sqrt(1e-24 + 1.3333e-24) = 1.5275e-12
        var reference = Line(new("reference standard", ContributionModel.Reference));
        Check.Relative(3e-12, reference.Estimate, 1e-12, "reference y");
        Check.Relative(Math.Sqrt(1e-24 + Math.Pow(1e-14 / Math.Sqrt(3) * 200, 2)), reference.StandardUncertainty!.Value, 1e-12, "reference u");
        Assert.Contains("conservative bound", reference.Source, StringComparison.Ordinal);

        // comparator: s = 0 < delta = 1e-11, so quantization may be common to every reading: 1e-11 / 2 = 5e-12, plus the stated
        // systematic error 2e-12: half-width 7e-12, rectangular
        var comparator = Line(new("comparator", ContributionModel.Resolution));
        Assert.Equal(DistributionKind.Rectangular, comparator.Distribution);
        Check.Relative(7e-12, comparator.HalfWidth!.Value, 1e-12, "comparator a");

        // temperature during the run: 2e-11/K x 0.3 K = 6e-12, rectangular
        Check.Relative(6e-12, Line(new("temperature during the run", ContributionModel.Temperature)).HalfWidth!.Value, 1e-12, "run temperature a");

        // warm-up: powered 20 min against a specified 60 min; the template's stated line of 3e-11
        var warm = Line(new("warm-up", ContributionModel.WarmUp, HalfWidth: 3e-11, WhenShort: WarmUpRule.Line));
        Check.Relative(3e-11, warm.HalfWidth!.Value, 1e-12, "warm-up a");
        Assert.Contains("only 20 min", warm.Source, StringComparison.Ordinal);
        var refused = Assert.Throws<MetrologyException>(() => Line(new("warm-up", ContributionModel.WarmUp, WhenShort: WarmUpRule.Refuse)));
        Assert.Equal("run.warmUpMinutes", refused.Parameter);
        Assert.True(refused.NotComputable);

        // Type A of constant readings: mean 2e-9, u = 0 (nothing scatters); a finite nu makes it a t input for Monte Carlo
        var typeA = Line(new("repeatability", ContributionModel.TypeA));
        Check.Relative(2e-9, typeA.Estimate, 1e-12, "mean");
        Assert.Equal(EvaluationType.A, typeA.Type);

        // u_c by hand: sqrt(1.5275e-12^2 + (7e-12/sqrt3)^2 + (6e-12/sqrt3)^2 + (3e-11/sqrt3)^2 + 0)
        var budget = UncertaintyBudget.Create(new[] { reference, comparator, Line(new("t", ContributionModel.Temperature)), warm, typeA }.Select(ToContribution).ToArray());
        double expected = Math.Sqrt(Math.Pow(Math.Sqrt(1e-24 + Math.Pow(1e-14 / Math.Sqrt(3) * 200, 2)), 2) + (49e-24 + 36e-24 + 900e-24) / 3);
        Check.Relative(expected, budget.Evaluate().CombinedStandardUncertainty, 1e-12, "u_c of the calibration result");
        Check.Relative(2e-9 + 3e-12, budget.Evaluate().Estimate, 1e-12, "y = mean + reference");
    }

    [Fact]
    public void TheInUseLinesCarryTheResultOverTheHoldPeriod()
    {
        // aging from the specification: 1e-11/day x 365 days = 3.65e-9, rectangular, sign unknown
        Check.Relative(3.65e-9, Line(new("aging", ContributionModel.Aging, BudgetStage.InUse)).HalfWidth!.Value, 1e-12, "aging a (specification)");
        // aging from the instrument's fit: correction 8e-12/day x 365 = 2.92e-9, u = sqrt((1e-12 x 365)^2 + 4e-10^2)
        var fitted = Line(new("aging", ContributionModel.Aging, BudgetStage.InUse), Spec with { AgingFit = new AgingHistory(8e-12, 1e-12, 4e-10, 3, 5, RunStart.AddYears(-4)) });
        Check.Relative(2.92e-9, fitted.Estimate, 1e-12, "aging correction");
        Check.Relative(Math.Sqrt(Math.Pow(365e-12, 2) + 16e-20), fitted.StandardUncertainty!.Value, 1e-12, "aging u (fit)");
        Assert.Equal(3, fitted.DegreesOfFreedom);
        // temperature of use: 2e-11/K x 5 K = 1e-10
        Check.Relative(1e-10, Line(new("temperature of use", ContributionModel.Temperature, BudgetStage.InUse, BandKelvin: 5)).HalfWidth!.Value, 1e-12, "use temperature a");
        // retrace 2e-9 as specified
        Check.Relative(2e-9, Line(new("retrace", ContributionModel.Retrace, BudgetStage.InUse)).HalfWidth!.Value, 1e-12, "retrace a");
        // orientation from the specified |Gamma| within 20 degrees: 1e-9 x 2 sin(10 deg) = 3.473e-10
        Check.Relative(1e-9 * 2 * Math.Sin(10 * Math.PI / 180), Line(new("orientation", ContributionModel.Orientation, BudgetStage.InUse)).HalfWidth!.Value, 1e-12, "orientation a");
    }

    [Fact]
    public void AMeasuredGammaGivesTheCapsMeanAndUWithTheTestsDegreesOfFreedom()
    {
        var gamma = new Vector3D(1e-10, -2e-10, 4e-10);
        double[,] cov = { { 1e-22, 0, 0 }, { 0, 1e-22, 0 }, { 0, 0, 1e-22 } };
        var spec = Spec with { Measured = new MeasuredSensitivity(7, gamma, cov, RunStart, 8) };
        var line = Line(new("orientation", ContributionModel.Orientation, BudgetStage.InUse), spec);
        var cap = OrientationShift.OverCap(gamma, Posture.FromAxis("+z"), 20, cov);
        Check.Relative(cap.Mean, line.Estimate, 1e-12, "mean shift");
        Check.Relative(cap.StandardUncertainty, line.StandardUncertainty!.Value, 1e-12, "u");
        // Welch-Satterthwaite with only u(Gamma)'s part finite: nu = u^4 / (u_Gamma^4 / 8)
        Check.Relative(Math.Pow(cap.StandardUncertainty, 4) / (Math.Pow(cap.GammaStandardUncertainty, 4) / 8), line.DegreesOfFreedom, 1e-12, "nu");
        // the mean over a 20 degree cap: -Gamma_z (1 - cos 20) / 2 (derived by hand)
        Check.Relative(-4e-10 * (1 - Math.Cos(20 * Math.PI / 180)) / 2, line.Estimate, 1e-12, "closed-form mean");
    }

    [Theory]
    [InlineData(ContributionModel.Aging)]
    [InlineData(ContributionModel.Orientation)]
    [InlineData(ContributionModel.Retrace)]
    public void LinesAfterTheCalibrationDateAreRefusedInTheCalibrationResult(ContributionModel model)
    {
        var ex = Assert.Throws<MetrologyException>(() => Line(new("x", model, BudgetStage.Calibration)));
        Assert.Contains("calibration result", ex.Message, StringComparison.Ordinal);
    }

    private static Contribution ToContribution(BudgetLine l) => Contribution.Create(l.Name, l.Distribution switch
    {
        DistributionKind.Rectangular => InputDistribution.Rectangular(l.HalfWidth!.Value),
        DistributionKind.StudentT when l.StandardUncertainty > 0 => InputDistribution.StudentT(l.StandardUncertainty!.Value, l.DegreesOfFreedom),
        _ => InputDistribution.NormalFromStandard(l.StandardUncertainty!.Value),
    }, l.Estimate);
}
