using System.Globalization;
using System.Text.Json;
using CalBudget.Api.Budgets;
using CalBudget.Api.Instruments;
using CalBudget.Core;
using CalBudget.Core.Aging;
using CalBudget.Core.Conformity;
using CalBudget.Core.Gum;
using CalBudget.Core.MonteCarlo;
using CalBudget.Core.Orientation;
using CalBudget.Core.Stability;
using CalBudget.Data.Calibrations;
using CalBudget.Data.Instruments;
using CalBudget.Data.References;
using CalBudget.Reports;

namespace CalBudget.Api.Certificates;

/// <summary>Everything stored facts give a certificate: the records, the budget version and its result, the history.</summary>
public sealed record CertificateFacts(string Number, DateTimeOffset IssuedAt, string IssuedBy, string ApproverPerson, string MakerPerson, CertificateWording Wording, CertificateIssueRequest Settings,
    Instrument Instrument, TimebaseSpecificationDto Specification, CalibrationRun Run, ReferenceStandard Reference, double[] Readings,
    Data.Budgets.BudgetVersion Version, IReadOnlyList<BudgetLineDto> Lines, EvaluateRequest Evaluate, EvaluateResponse Result, StatedResult? AsLeft,
    Data.Instruments.SensitivityTest? SensitivityTest, IReadOnlyList<HistoryPoint> History, string? Replaces, string? AmendmentNote)
{
    /// <summary>The as-found calibration result as the version states it (CMC floor, governing evaluation); from <see cref="Result"/> when not given.</summary>
    public StatedResult? AsFound { get; init; }

    /// <summary>The stated (as-left when adjusted) calibration result's scope and CMC, when its version keeps them.</summary>
    public CalibrationResultDto? Calibration { get; init; }

    /// <summary>The in-use prediction of the stated result's version, when it has one.</summary>
    public PredictionDto? Prediction { get; init; }
}

/// <summary>What composing gives: the worded content and the numbers stored beside it.</summary>
public sealed record ComposedCertificate(CertificateContent Content, StatedResult Result, StoredDecision? Decision, StoredRecall? Recall);

/// <summary>
/// Turns stored facts into a certificate's content: the conformity decision (Core), the recall interval (Core), the
/// posture shifts (Core), the stability and history plots' data, and every number rounded for statement (U to two
/// significant digits, invariant culture).
/// </summary>
public static class CertificateComposer
{
    private static readonly CultureInfo C = CultureInfo.InvariantCulture;

    /// <summary>Composes; a <see cref="MetrologyException"/> names the request field that cannot be met.</summary>
    public static ComposedCertificate Compose(CertificateFacts f, long maxTrials, double minimumRatio = 4)
    {
        ArgumentNullException.ThrowIfNull(f);
        var r = f.Result;
        var asFound = f.AsFound ?? new StatedResult(f.Run.Fields.StartedAt, r.Estimate, r.CombinedStandardUncertainty, r.ExpandedUncertainty, r.CoverageFactor, r.CoverageProbability,
            r.EffectiveDegreesOfFreedom);
        var stated = f.AsLeft ?? asFound;
        var spec = f.Specification;
        ToleranceLimits? limits = f.Settings.Tolerance is { } t ? ToleranceLimits.Create(t.Lower, t.Upper)
            : spec.Tolerance is { } st && (st.Lower is not null || st.Upper is not null) ? ToleranceLimits.Create(st.Lower, st.Upper) : null;

        StoredDecision? decision = null;
        List<string>? conformity = null;
        if (f.Settings.DecisionRule is { } ruleRequest)
        {
            if (limits is null)
            {
                throw new MetrologyException("tolerance", "A statement of conformity needs tolerance limits: give them, or record them in the instrument's specification.");
            }

            var rule = ruleRequest.Kind switch
            {
                "simple-acceptance" => DecisionRule.SimpleAcceptance,
                "guard-band" => DecisionRule.GuardBand(ruleRequest.GuardBandMultiple ?? 1),
                "non-binary" => DecisionRule.NonBinary,
                _ => throw new MetrologyException("decisionRule.kind", "One of simple-acceptance, guard-band, non-binary."),
            };
            // p_c from the distribution the stated interval comes from: t with nu_eff (normal when infinite), or the Monte Carlo
            // samples when the GUM result was not validated
            double? nu = stated.EffectiveDegreesOfFreedom;
            var d = ConformityAssessment.Decide(stated.Estimate, stated.StandardUncertainty, stated.ExpandedUncertainty, limits, rule, nu);
            if (ruleRequest.Kind == "simple-acceptance" && d.TestUncertaintyRatio is { } low && low < minimumRatio && string.IsNullOrWhiteSpace(ruleRequest.LowRatioReason))
            {
                throw new MetrologyException("decisionRule.lowRatioReason",
                    $"Simple acceptance with a test uncertainty ratio of {low.ToString("0.0", C)} : 1, below the laboratory's minimum of {minimumRatio.ToString("0.#", C)} : 1, needs a stated reason (or a guard band).") { NotComputable = true };
            }

            double? mcConformity = MonteCarloConformity(f, limits, maxTrials);
            string governs = stated.Governs == "Monte Carlo" && mcConformity is not null ? "Monte Carlo" : nu is double v && double.IsFinite(v) ? "t" : "normal";
            double pc = governs == "Monte Carlo" ? mcConformity!.Value : d.ProbabilityOfConformity;
            decision = new StoredDecision(ruleRequest.Kind!, limits.Lower, limits.Upper, ConformityAssessment.Words(d.Outcome), d.GuardBand, d.AcceptanceLower,
                d.AcceptanceUpper, d.ProbabilityOfConformity, mcConformity, d.TestUncertaintyRatio, governs, ruleRequest.LowRatioReason);
            string from = governs switch
            {
                "Monte Carlo" => "from the budget's Monte Carlo distribution (JCGM 101), which governs because the GUM result was not validated",
                "t" => $"from the t-distribution with {DegreesWords(nu)} effective degrees of freedom that the stated interval comes from (JCGM 106:2012 with JCGM 100 G.3)",
                _ => "for a normal result (JCGM 106:2012)",
            };
            conformity = [RuleWords(ruleRequest.Kind!, d.GuardBand, stated.ExpandedUncertainty, ruleRequest.GuardBandMultiple ?? 1),
                $"Tolerance: {ToleranceWords(limits)}{(f.Settings.Tolerance is null ? $" (the instrument's specification{(spec.Tolerance?.Conditions is { Length: > 0 } cond ? ", " + cond : "")})" : "")}. " +
                "The decision is made on the calibration result and its expanded uncertainty; aging and the conditions of use are not added to it.",
                $"Outcome: {ConformityAssessment.Words(d.Outcome).ToUpperInvariant()}. Probability of conformity p_c {Probability(pc)} {from}" +
                (governs != "Monte Carlo" && mcConformity is { } m ? $"; {Probability(m)} from the budget's Monte Carlo distribution" : "") + "." +
                (d.TestUncertaintyRatio is { } tur ? $" Test uncertainty ratio (T_U - T_L) / 2U = {tur.ToString("0.0", C)} : 1." : "") +
                (ruleRequest.LowRatioReason is { Length: > 0 } why ? $" Simple acceptance below the laboratory's minimum ratio of {minimumRatio.ToString("0.#", C)} : 1 was chosen because: {why}" : "")];
        }

        StoredRecall? recall = null;
        List<string>? recallWords = null;
        // the stated result joins the history; an adjustment at this calibration starts the fit afresh from the as-left result
        var all = f.History.Append(new HistoryPoint(stated.CalibratedAt, stated.Estimate, stated.ExpandedUncertainty, stated.CoverageFactor, f.AsLeft is not null))
            .OrderBy(h => h.Date).ToArray();
        var history = InstrumentHistory.SinceLastAdjustment(all);
        var origin = history[0].Date;
        double Day(DateTimeOffset d) => (d - origin).TotalDays;
        AgingResult? fit = InstrumentHistory.Fit(history);

        if (f.Settings.RecallInterval is { } recallRequest)
        {
            if (limits is null)
            {
                throw new MetrologyException("tolerance", "A recall interval needs tolerance limits: give them, or record them in the instrument's specification.");
            }

            double? specifiedRate = spec.AgingPerDay ?? spec.AgingPerYear / 365.25;
            if (fit is null && specifiedRate is null)
            {
                throw new MetrologyException("recallInterval", $"A recall interval needs an aging fit (at least three dated results since the last adjustment: this one and priorResults or earlier certificates; there are {history.Length}) or the instrument's specified aging.") { NotComputable = true };
            }

            var found = fit is not null
                ? RecallInterval.Find(fit, Day(stated.CalibratedAt), stated.Estimate, stated.StandardUncertainty, stated.CoverageFactor, limits, recallRequest.LongestDays ?? 730,
                    fit.ResidualStandardDeviation)
                : RecallInterval.FromSpecification(stated.Estimate, stated.StandardUncertainty, stated.CoverageFactor, limits, recallRequest.LongestDays ?? 730, specifiedRate!.Value);
            DateTimeOffset? date = found.Days is { } days ? stated.CalibratedAt.UtcDateTime.Date.AddDays(days) : null;
            recall = new StoredRecall(found.Days, date is null ? null : new DateTimeOffset(date.Value.DateTime, TimeSpan.Zero), found.LongestDays, found.Method);
            recallWords = [found.Days is { } dd
                    ? $"Recommended recall: {date!.Value:yyyy-MM-dd} ({dd} days after calibration), when the predicted offset {Sci(found.PredictedOffsetAtRecall)} with its expanded uncertainty {Sci(found.ExpandedUncertaintyAtRecall)} reaches the tolerance."
                    : $"The predicted offset with its expanded uncertainty stays within the tolerance for the laboratory's longest interval of {found.LongestDays} days; recall at that interval.",
                found.Method];
        }

        var content = new CertificateContent
        {
            Number = f.Number,
            Title = f.Wording.Title,
            LabName = f.Wording.LabName,
            LabAddress = f.Wording.LabAddress,
            Particulars = Particulars(f),
            Method = [.. f.Wording.Method, $"Comparator: {f.Run.Fields.Comparator}, resolution {Sci(f.Run.Fields.ComparatorResolution)} at a gate time of {f.Run.Fields.GateTimeSeconds.ToString("G", C)} s; {f.Readings.Length} readings."],
            Traceability = [ReferenceWords(f.Reference), f.Wording.Traceability],
            Environment = [EnvironmentWords(f.Run.Fields.Environment)],
            Posture = PostureWords(f),
            Results = ResultLines(f, asFound),
            UncertaintyStatement = $"The expanded uncertainty U is the combined standard uncertainty multiplied by the coverage factor k = {stated.CoverageFactor.ToString("0.00", C)}, " +
                $"which for a t-distribution with {DegreesWords(stated.EffectiveDegreesOfFreedom)} effective degrees of freedom corresponds to a coverage probability of approximately {(stated.CoverageProbability * 100).ToString("0.##", C)} %. " +
                "It covers the measurement on the calibration date in the posture and conditions stated: the reference, the comparator, the readings' scatter and the environment during the run; " +
                "it does not include aging or the conditions of later use, which the in-use prediction states separately." +
                (f.Calibration is { } cal ? (cal.WithinScope ? " Within the laboratory's scope: " : " ") + cal.Capability : "") +
                (stated.Governs == "Monte Carlo" && stated.CoverageInterval is { } ci ? $" The GUM result was not validated by the Monte Carlo method (JCGM 101 clause 8): the Monte Carlo coverage interval {Notation.Interval(ci[0], ci[1])} is the result's coverage interval." : ""),
            Budget = BudgetRows(f.Lines.Where(l => l.Stage != "in-use").ToArray(), r),
            Prediction = PredictionWords(f),
            BudgetSummary = [$"Combined standard uncertainty u_c = {Sig(r.CombinedStandardUncertainty)}; effective degrees of freedom {DegreesWords(r.EffectiveDegreesOfFreedom)}; " +
                $"k = {r.CoverageFactor.ToString("0.00", C)}; U = {Sig(r.ExpandedUncertainty)}. Budget {f.Version.BudgetId} version {f.Version.Number} (template {f.Lines.Count} lines, engine {f.Version.EngineVersion})."
                + (r.MonteCarlo is { } mc ? $" Monte Carlo (JCGM 101, {mc.Trials.ToString("N0", C)} trials): u = {Sig(mc.StandardUncertainty)}, {(stated.CoverageProbability * 100).ToString("0.##", C)} % interval {Notation.Interval(mc.CoverageInterval[0], mc.CoverageInterval[1])}." : "")
                + (f.Calibration is { CmcApplied: true } cmc ? $" The budget's U is below the laboratory's CMC for this range (U = {Sig(cmc.CmcExpandedUncertainty ?? 0)}), so the CMC is stated (ILAC-P14)." : "")],
            Conformity = conformity,
            Recall = recallWords,
            Stability = StabilityData(f),
            Drift = DriftData(history, fit, origin),
            Authorisation = [
                $"Authorised by {f.ApproverPerson}, approver (key {f.Version.ApprovedBy}), who approved the uncertainty budget on {f.Version.ApprovedAt:yyyy-MM-dd HH:mm} UTC: \"{f.Version.SignatureMeaning}\"",
                $"Budget prepared by {f.MakerPerson}. Certificate issued by {f.IssuedBy} on {f.IssuedAt:yyyy-MM-dd HH:mm} UTC."],
            Statements = f.Wording.Statements,
            Amendment = f.Replaces is null ? null : $"Amendment: this certificate replaces certificate {f.Replaces}, which is withdrawn from use. {f.AmendmentNote}",
            Footer = f.Wording.Footer,
        };
        return new ComposedCertificate(content, stated, decision, recall);
    }

    private static double? MonteCarloConformity(CertificateFacts f, ToleranceLimits limits, long maxTrials)
    {
        if (f.AsLeft is not null || f.Evaluate.MonteCarlo is not { } mc)
        {
            return null;
        }

        // The same budget and seed as the stored run: the same M output values, counted within the limits.
        if (BudgetRequestMapper.TryMap(f.Evaluate, new Hosting.FieldErrors()) is not { } budget)
        {
            return null;
        }

        var run = MonteCarloEngine.Run(budget, new MonteCarloOptions { Trials = mc.Trials, Seed = mc.Seed ?? 0, MaxTrials = maxTrials, CountWithin = (limits.Lower, limits.Upper) });
        return run.FractionWithin;
    }

    private static List<Field> Particulars(CertificateFacts f)
    {
        var i = f.Instrument.Fields;
        var list = new List<Field>
        {
            new("Customer", i.Customer + (f.Settings.CustomerAddress is { Count: > 0 } a ? ", " + string.Join(", ", a) : "")),
            new("Item", $"{(i.Description.Length > 0 ? i.Description + "; " : "")}timebase ({i.OscillatorKind}, nominal {Hertz(i.NominalFrequencyHz)})"),
            new("Manufacturer and model", $"{i.Manufacturer} {i.Model}"),
            new("Identification", $"asset {i.AssetNumber}{(i.SerialNumber.Length > 0 ? ", serial " + i.SerialNumber : "")}"),
            new("Condition on receipt", f.Settings.ItemCondition ?? ""),
            new("Date of receipt", f.Settings.ReceivedAt!.Value.ToString("yyyy-MM-dd", C)),
            new("Date of calibration", f.Run.Fields.StartedAt.ToString("yyyy-MM-dd", C) + (f.Run.Fields.EndedAt is { } e && e.Date != f.Run.Fields.StartedAt.Date ? " to " + e.ToString("yyyy-MM-dd", C) : "")),
            new("Date of issue", f.IssuedAt.ToString("yyyy-MM-dd", C)),
        };
        return list;
    }

    private static string ReferenceWords(ReferenceStandard reference)
    {
        var r = reference.Fields;
        return $"Reference standard {r.Identity} ({r.Kind}, {Hertz(r.NominalFrequencyHz)}), certificate {r.CertificateNumber} of {r.IssuingLab} dated {r.CalibrationDate:yyyy-MM-dd}: " +
            $"offset {Sci(r.FractionalOffset)}, U = {Sig(r.ExpandedUncertainty)} (k = {r.CoverageFactor.ToString("G", C)}), drift {Sci(r.DriftPerDay)} per day; due {r.DueDate:yyyy-MM-dd}.";
    }

    private static string EnvironmentWords(RunEnvironment e)
    {
        var parts = new List<string>();
        if (e.TemperatureCelsius is { } t)
        {
            parts.Add($"ambient temperature {t.ToString("0.0", C)} °C" + (e.TemperatureVariationKelvin is { } dt ? $" ± {dt.ToString("0.0", C)} K" : ""));
        }

        if (e.RelativeHumidityPercent is { } h)
        {
            parts.Add($"relative humidity {h.ToString("0", C)} %");
        }

        if (e.Supply.Length > 0)
        {
            parts.Add("supply " + e.Supply);
        }

        return parts.Count == 0 ? "Laboratory conditions as recorded in the run; no values were recorded." : "During calibration: " + string.Join("; ", parts) + ".";
    }

    private static PostureStatement PostureWords(CertificateFacts f)
    {
        var run = f.Run.Fields;
        var up = new Vector3D(run.UpX, run.UpY, run.UpZ);
        var calibration = Posture.FromVector(up);
        string name = run.PostureName ?? "a posture given by its up vector";
        string words = $"Calibrated {name}: up vector ({Vec(calibration.Up)}) in the instrument's body frame; gravity along ({Vec(new Vector3D(-calibration.Up.X, -calibration.Up.Y, -calibration.Up.Z))}).";
        string frame = "Body frame: +x to the right seen from the front panel, +y toward the rear, +z up through the top cover; the up vector is opposite to gravity.";
        var others = new List<Field>();
        string basis;
        if (f.SensitivityTest is { } test)
        {
            var gamma = new Vector3D(test.Gamma[0], test.Gamma[1], test.Gamma[2]);
            double[,]? cov = null;
            if (test.Covariance is { } c)
            {
                cov = new double[3, 3];
                for (int i = 0; i < 3; i++)
                {
                    for (int j = 0; j < 3; j++)
                    {
                        cov[i, j] = c[i][j];
                    }
                }
            }

            basis = $"Shifts from the acceleration-sensitivity vector measured by tip-over test {test.Id} on {test.TestedAt:yyyy-MM-dd}: Gamma = ({VecSci(gamma)}) per g; dy = Gamma . (up_use - up_calibration), u from the test's covariance.";
            foreach (var p in f.Instrument.Fields.Postures.Where(p => p.Name != run.PostureName))
            {
                var s = OrientationShift.Known(gamma, calibration, Posture.FromVector(new Vector3D(p.X, p.Y, p.Z)), cov);
                others.Add(new Field(p.Name, $"{Sci(s.Shift ?? 0)} (u = {Sig(s.StandardUncertainty)}), up ({Vec(new Vector3D(p.X, p.Y, p.Z))})"));
            }
        }
        else if (f.Specification.AccelerationSensitivityPerG is { } g)
        {
            basis = $"No tip-over test is on record: bounds from the specified acceleration sensitivity |Gamma| <= {Sci(g)} per g, |dy| <= |Gamma| |up_use - up_calibration|.";
            foreach (var p in f.Instrument.Fields.Postures.Where(p => p.Name != run.PostureName))
            {
                var use = Posture.FromVector(new Vector3D(p.X, p.Y, p.Z)).Up;
                double chord = Math.Sqrt(Math.Pow(use.X - calibration.Up.X, 2) + Math.Pow(use.Y - calibration.Up.Y, 2) + Math.Pow(use.Z - calibration.Up.Z, 2));
                others.Add(new Field(p.Name, $"within ± {Sig(g * chord)}, up ({Vec(use)})"));
            }
        }
        else
        {
            basis = "Neither a tip-over test nor a specified acceleration sensitivity is on record: the effect of other postures is not stated.";
        }

        return new PostureStatement(words, [calibration.Up.X, calibration.Up.Y, calibration.Up.Z], frame, others, basis);
    }

    private static List<string>? PredictionWords(CertificateFacts f)
    {
        if (f.Prediction is not { } p)
        {
            return null;
        }

        var inUse = p.Result.Contributions.Where(c => p.Lines.Contains(c.Name)).Select(c => $"{c.Name} u = {Sig(c.StandardUncertainty)}");
        return [p.Statement,
            $"It combines the calibration result with the in-use lines of the budget ({string.Join("; ", inUse)}); its expanded uncertainty is for the customer's planning and the recall interval, " +
            "and is not the uncertainty of the calibration result.",
            "It is a prediction from the stated assumptions and the data named in the budget; it does not replace a calibration."];
    }

    private static string Probability(double p) => p > 0.99995 ? "> 0.9999" : p < 0.00005 ? "< 0.0001" : "= " + p.ToString("0.0000", C);

    private static List<ResultLine> ResultLines(CertificateFacts f, StatedResult measured)
    {
        const string quantity = "fractional frequency offset y = (f - f0) / f0 (dimensionless)";
        string Statement(StatedResult s) => StatementRounding.Round(s.Estimate, s.ExpandedUncertainty).ToScientific();
        if (f.AsLeft is { } left)
        {
            return [new ResultLine("as found", quantity, Statement(measured), "before adjustment"), new ResultLine("as left", quantity, Statement(left), "after adjustment")];
        }

        string note = f.Settings.Adjusted == true ? "" : "no adjustment was made: as found equals as left";
        return [new ResultLine("as found", quantity, Statement(measured), note), new ResultLine("as left", quantity, Statement(measured), note)];
    }

    private static List<BudgetRow> BudgetRows(IReadOnlyList<BudgetLineDto> lines, EvaluateResponse r) =>
        r.Contributions.Select(c =>
        {
            var line = lines.FirstOrDefault(l => l.Name == c.Name);
            return new BudgetRow(c.Name, (line?.Input.Distribution ?? "normal") + $", type {c.Type}", Sig(c.StandardUncertainty), c.Sensitivity.ToString("G4", C), Sig(c.Contribution),
                c.DegreesOfFreedom is { } nu ? nu.ToString("0.#", C) : "inf", (c.VarianceShare * 100).ToString("0.0", C) + " %");
        }).ToList();

    private static StabilityPlot StabilityData(CertificateFacts f)
    {
        double tau0 = f.Run.Fields.GateTimeSeconds;
        if (f.Readings.Length < 3)
        {
            return new StabilityPlot("Overlapping Allan deviation of the run", [], [], [], [], "Too few readings for a stability plot.");
        }

        var analysis = StabilityAnalysis.Analyse(f.Readings, StabilityDataType.Frequency, tau0, [StabilityStatistic.Oadev]);
        var points = analysis.Results[StabilityStatistic.Oadev].Where(p => p.Deviation > 0).ToArray();
        return new StabilityPlot("Overlapping Allan deviation of the run (NIST SP 1065), bars: 68.3 % confidence intervals",
            points.Select(p => p.Tau).ToArray(), points.Select(p => p.Deviation).ToArray(), points.Select(p => p.Interval.Low).ToArray(), points.Select(p => p.Interval.High).ToArray(),
            $"{f.Readings.Length} readings at tau0 = {tau0.ToString("G", C)} s.");
    }

    private static DriftPlot DriftData(HistoryPoint[] history, AgingResult? fit, DateTimeOffset origin)
    {
        double[] days = history.Select(h => (h.Date - origin).TotalDays).ToArray();
        double[]? fitDays = fit is null ? null : [days[0], days[^1]];
        return new DriftPlot("History of the instrument's results since its last adjustment, bars: U", days, history.Select(h => h.Offset).ToArray(), history.Select(h => h.ExpandedUncertainty).ToArray(),
            fitDays, fitDays?.Select(fit!.ValueAt).ToArray(), $"days from {origin:yyyy-MM-dd}",
            fit is null ? $"{history.Length} dated result(s); a drift line needs three." : $"Dashed: linear aging fit, {Sci(fit.Parameters[1])} per day.");
    }

    private static string RuleWords(string kind, double w, double bigU, double multiple) => kind switch
    {
        "simple-acceptance" => "Decision rule: simple acceptance (ILAC-G8:09/2019 4.2.1): the item conforms when the measured value lies within the tolerance; the risk of a false acceptance can reach 50 % for a value at a limit.",
        "guard-band" => $"Decision rule: guarded acceptance (ILAC-G8:09/2019 4.2.2) with a guard band w = {multiple.ToString("G", C)} U = {Sig(w)}: the item conforms when the measured value lies within the tolerance narrowed by w.",
        _ => $"Decision rule: the non-binary statement of ILAC-G8:09/2019 4.2.3 with w = U = {Sig(bigU)}: pass, conditional pass, conditional fail or fail according to where y ± U lies against the tolerance.",
    };

    private static string ToleranceWords(ToleranceLimits l) => (l.Lower, l.Upper) switch
    {
        ({ } lo, { } hi) => $"{Sci(lo)} to {Sci(hi)}",
        (null, { } hi) => $"at most {Sci(hi)}",
        ({ } lo, null) => $"at least {Sci(lo)}",
        _ => "none",
    };

    private static string Hertz(double f) => Notation.Frequency(f);

    // the degrees of freedom k was taken from: nu_eff truncated (JCGM 100 G.4.1)
    private static string DegreesWords(double? nu) => Notation.DegreesOfFreedom(nu);

    // + 0.0 turns a negative zero into zero, so no "-0" is printed; for unit vectors (postures)
    private static string Vec(Vector3D v) => $"{(v.X + 0.0).ToString("0.###", C)}, {(v.Y + 0.0).ToString("0.###", C)}, {(v.Z + 0.0).ToString("0.###", C)}";

    // a small vector (Gamma, per g) to significant digits
    private static string VecSci(Vector3D v) => $"{Notation.Uncertainty(v.X + 0.0)}, {Notation.Uncertainty(v.Y + 0.0)}, {Notation.Uncertainty(v.Z + 0.0)}";

    // A value to three significant digits; an uncertainty to two (JCGM 100 7.2.6); one notation throughout (Notation).
    private static string Sci(double v) => Notation.Value(v);

    private static string Sig(double u) => Notation.Uncertainty(u);

    internal static JsonElement Element<T>(T value, JsonSerializerOptions o) => JsonSerializer.SerializeToElement(value, o);
}
