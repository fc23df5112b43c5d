using System.Text.Json;

namespace CalBudget.Api.Budgets;

/// <summary>Build a budget from a calibration run and a template.</summary>
/// <param name="RunId">The run (with readings, where the template has a Type A line).</param>
/// <param name="TemplateId">The template (GET /api/v1/templates).</param>
/// <param name="PosturePolicy">The posture of use allowed for; default "as-calibrated".</param>
/// <param name="Overrides">Contributions replaced by stated values, each with its reason.</param>
/// <param name="MonteCarlo">Present to add a JCGM 101 Monte Carlo evaluation (the seed is recorded, so it can be reproduced).</param>
public sealed record BudgetBuildRequest(long? RunId, string? TemplateId, PosturePolicyDto? PosturePolicy, IReadOnlyList<OverrideDto>? Overrides,
    MonteCarloRequest? MonteCarlo);

/// <summary>A new version of a budget: rebuilt from the run's current data, with what changes.</summary>
/// <param name="Reason">Why (required).</param>
/// <param name="PosturePolicy">A new posture policy; absent keeps the last version's.</param>
/// <param name="Overrides">New overrides; absent keeps the last version's, [] removes them.</param>
/// <param name="MonteCarlo">New Monte Carlo settings; absent keeps the last version's.</param>
public sealed record BudgetRevisionRequest(string? Reason, PosturePolicyDto? PosturePolicy, IReadOnlyList<OverrideDto>? Overrides, MonteCarloRequest? MonteCarlo);

/// <summary>The posture of use.</summary>
/// <param name="Kind">"as-calibrated" (no orientation term), "known", "tilt-limit" or "any".</param>
/// <param name="UseUp">For "known": the up vector of use ("+x" ... "-z" or [x, y, z]).</param>
/// <param name="TiltLimitDegrees">For "tilt-limit": 0 to 180.</param>
public sealed record PosturePolicyDto(string? Kind, JsonElement? UseUp, double? TiltLimitDegrees);

/// <summary>A contribution replaced by stated values (the fields of POST /api/v1/budgets/evaluate), with the reason.</summary>
/// <param name="Name">The template contribution replaced.</param>
/// <param name="Reason">Why (required).</param>
/// <param name="Estimate">x_i.</param>
/// <param name="Distribution">normal, rectangular, triangular, u-shaped, student-t.</param>
/// <param name="StandardUncertainty">u.</param>
/// <param name="ExpandedUncertainty">U, with coverageFactor.</param>
/// <param name="CoverageFactor">k.</param>
/// <param name="HalfWidth">a.</param>
/// <param name="DegreesOfFreedom">nu.</param>
/// <param name="Type">"A" or "B".</param>
public sealed record OverrideDto(string? Name, string? Reason, double? Estimate, string? Distribution, double? StandardUncertainty, double? ExpandedUncertainty,
    double? CoverageFactor, double? HalfWidth, double? DegreesOfFreedom, string? Type);

/// <summary>An approval.</summary>
/// <param name="Meaning">What the signature means; default "Reviewed and approved as the uncertainty budget of this calibration."</param>
public sealed record ApprovalRequest(string? Meaning);

/// <summary>One line of a stored budget: where its value came from and what it contributes.</summary>
/// <param name="Name">The contribution.</param>
/// <param name="Model">The template's model, or "override".</param>
/// <param name="Source">The inputs and the arithmetic.</param>
/// <param name="Input">The contribution as evaluated (the fields of POST /api/v1/budgets/evaluate).</param>
/// <param name="Stage">"calibration" (a line of the calibration result) or "in-use" (of the in-use prediction); absent on versions made before the two were kept apart.</param>
public sealed record BudgetLineDto(string Name, string Model, string Source, ContributionRequest Input, string? Stage = null);

/// <summary>
/// The calibration result as the certificate states it: the evaluation of the calibration lines, with U never below the
/// CMC that covers it (ILAC-P14), and which evaluation governs the coverage interval.
/// </summary>
/// <param name="Estimate">y, the mean offset over the run in the calibration posture and conditions, on the calibration date.</param>
/// <param name="StandardUncertainty">u = U / k as stated.</param>
/// <param name="ExpandedUncertainty">U as stated: the budget's, or the CMC's when that is larger.</param>
/// <param name="CoverageFactor">k of the budget.</param>
/// <param name="CoverageProbability">p.</param>
/// <param name="EffectiveDegreesOfFreedom">nu_eff of the budget (null: infinite).</param>
/// <param name="BudgetExpandedUncertainty">U from the budget alone.</param>
/// <param name="WithinScope">Whether a capability of the lab's scope covers the result.</param>
/// <param name="Capability">That capability in words, or why none does.</param>
/// <param name="CmcExpandedUncertainty">The covering CMC's U, when one covers.</param>
/// <param name="CmcApplied">True when U was raised to the CMC.</param>
/// <param name="Governs">"GUM", or "Monte Carlo" when the budget's Monte Carlo run did not validate the GUM result (JCGM 101 clause 8).</param>
/// <param name="CoverageInterval">The stated coverage interval [low, high].</param>
public sealed record CalibrationResultDto(double Estimate, double StandardUncertainty, double ExpandedUncertainty, double CoverageFactor, double CoverageProbability,
    double? EffectiveDegreesOfFreedom, double BudgetExpandedUncertainty, bool WithinScope, string Capability, double? CmcExpandedUncertainty, bool CmcApplied,
    string Governs, double[] CoverageInterval);

/// <summary>
/// The in-use prediction: the calibration result carried to the end of a hold period and the conditions of use. A
/// prediction with stated assumptions, never the uncertainty of the result.
/// </summary>
/// <param name="HoldDays">The hold period after calibration, days.</param>
/// <param name="Until">The end of the hold period.</param>
/// <param name="Assumptions">Every assumption in words.</param>
/// <param name="Statement">The prediction as one labelled sentence.</param>
/// <param name="Lines">The names of the in-use lines (the calibration lines come first in its evaluation).</param>
/// <param name="Evaluate">The evaluation request: every calibration line and every in-use line.</param>
/// <param name="Result">Its evaluation.</param>
public sealed record PredictionDto(double HoldDays, DateTimeOffset Until, IReadOnlyList<string> Assumptions, string Statement, IReadOnlyList<string> Lines,
    EvaluateRequest Evaluate, EvaluateResponse Result);

/// <summary>What a version stores beside its calibration evaluation.</summary>
/// <param name="Calibration">The calibration result as stated.</param>
/// <param name="Prediction">The in-use prediction, or null for a template without in-use lines.</param>
public sealed record BudgetStagesDto(CalibrationResultDto Calibration, PredictionDto? Prediction);

/// <summary>A version of a budget.</summary>
/// <param name="BudgetId">The budget.</param>
/// <param name="Number">1, 2, ...</param>
/// <param name="State">draft, approved or superseded.</param>
/// <param name="Reason">Why it was made.</param>
/// <param name="TemplateId">The template.</param>
/// <param name="TemplateVersion">Its version.</param>
/// <param name="EngineVersion">The engine that evaluated it.</param>
/// <param name="MadeAt">When.</param>
/// <param name="MadeBy">By whom.</param>
/// <param name="ApprovedAt">When approved.</param>
/// <param name="ApprovedBy">By whom.</param>
/// <param name="SignatureMeaning">What the approval means.</param>
/// <param name="SupersededAt">When a later version was approved.</param>
/// <param name="Lines">The lines.</param>
/// <param name="Result">The evaluation of the calibration lines (on versions made before the two results were kept apart: of every line, as approved).</param>
/// <param name="Snapshot">Every input as used: run, reference, specification, readings (upload and SHA-256), posture policy, overrides, the evaluation request.</param>
/// <param name="CalibrationResult">The calibration result as stated (CMC floor, scope, which evaluation governs); null on versions made before the two results were kept apart.</param>
/// <param name="Prediction">The in-use prediction; null when the template has no in-use lines, or on earlier versions.</param>
public sealed record BudgetVersionDto(long BudgetId, int Number, string State, string Reason, string TemplateId, int TemplateVersion, string EngineVersion,
    DateTimeOffset MadeAt, string MadeBy, DateTimeOffset? ApprovedAt, string? ApprovedBy, string? SignatureMeaning, DateTimeOffset? SupersededAt,
    IReadOnlyList<BudgetLineDto> Lines, EvaluateResponse Result, JsonElement Snapshot, CalibrationResultDto? CalibrationResult, PredictionDto? Prediction);

/// <summary>A budget with its newest version.</summary>
/// <param name="Id">Its id.</param>
/// <param name="RunId">The run.</param>
/// <param name="TemplateId">The template.</param>
/// <param name="CreatedAt">When.</param>
/// <param name="CreatedBy">By whom.</param>
/// <param name="Versions">How many versions.</param>
/// <param name="Latest">The newest version.</param>
public sealed record BudgetDto(long Id, long RunId, string TemplateId, DateTimeOffset CreatedAt, string CreatedBy, int Versions, BudgetVersionDto Latest);

/// <summary>A version in a list.</summary>
/// <param name="Number">Its number.</param>
/// <param name="State">Its state.</param>
/// <param name="Reason">Why it was made.</param>
/// <param name="MadeAt">When.</param>
/// <param name="MadeBy">By whom.</param>
/// <param name="ApprovedBy">Approved by.</param>
/// <param name="ExpandedUncertainty">Its U (the calibration result's).</param>
public sealed record BudgetVersionSummaryDto(int Number, string State, string Reason, DateTimeOffset MadeAt, string MadeBy, string? ApprovedBy, double ExpandedUncertainty);

/// <summary>What changed between two versions.</summary>
/// <param name="From">The earlier version.</param>
/// <param name="To">The later.</param>
/// <param name="Contributions">Each contribution in either, with its values in both.</param>
/// <param name="Estimate">y in both.</param>
/// <param name="ExpandedUncertainty">U of the calibration result in both (as stated, after the CMC floor, where kept).</param>
/// <param name="PredictionEstimate">The in-use prediction's y in both (null where there is none).</param>
/// <param name="PredictionExpandedUncertainty">Its U in both.</param>
public sealed record BudgetDiffDto(int From, int To, IReadOnlyList<ContributionDiffDto> Contributions, double[] Estimate, double[] ExpandedUncertainty,
    double?[] PredictionEstimate, double?[] PredictionExpandedUncertainty);

/// <summary>One contribution across two versions (null where it is absent).</summary>
/// <param name="Name">The contribution.</param>
/// <param name="Change">"added", "removed", "changed" or "same".</param>
/// <param name="StandardUncertainty">u_i in from and to.</param>
/// <param name="Estimate">x_i in from and to.</param>
/// <param name="Source">The source in from and to.</param>
/// <param name="Stage">The line's stage in from and to.</param>
public sealed record ContributionDiffDto(string Name, string Change, double?[] StandardUncertainty, double?[] Estimate, string?[] Source, string?[] Stage);

/// <summary>A template in the list.</summary>
/// <param name="Id">Its id.</param>
/// <param name="Version">Its version.</param>
/// <param name="Title">What it is for.</param>
/// <param name="AppliesTo">Oscillator kinds.</param>
/// <param name="CoverageProbability">p.</param>
/// <param name="Contributions">Its lines: name, model, stage, settings.</param>
/// <param name="HoldDays">The in-use prediction's hold period, days.</param>
public sealed record TemplateDto(string Id, int Version, string Title, IReadOnlyList<string> AppliesTo, double CoverageProbability, IReadOnlyList<TemplateLineDto> Contributions,
    double HoldDays);

/// <summary>A template line.</summary>
/// <param name="Name">Its name.</param>
/// <param name="Model">Its model.</param>
/// <param name="Settings">Its settings in words.</param>
/// <param name="Stage">"calibration" or "in-use".</param>
public sealed record TemplateLineDto(string Name, string Model, string Settings, string Stage);
