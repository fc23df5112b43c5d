using System.Text.Json;

namespace CalBudget.Api.Certificates;

/// <summary>Issue a certificate from an approved budget version.</summary>
/// <param name="BudgetId">The budget.</param>
/// <param name="Version">Its approved version.</param>
/// <param name="ReceivedAt">When the item was received (required).</param>
/// <param name="ItemCondition">The item's condition on receipt, in words (required).</param>
/// <param name="CustomerAddress">The customer's address, one line each (optional).</param>
/// <param name="Adjusted">True when the timebase was adjusted; the certificate then needs the as-left result (asLeftBudgetId and asLeftVersion).</param>
/// <param name="AsLeftBudgetId">The approved budget of the as-left run, when adjusted.</param>
/// <param name="AsLeftVersion">Its approved version.</param>
/// <param name="Tolerance">The tolerance; absent takes the instrument's specification.</param>
/// <param name="DecisionRule">The decision rule; absent means no statement of conformity.</param>
/// <param name="RecallInterval">A recall interval, only when the customer asked for one (ISO/IEC 17025 7.8.4.3).</param>
/// <param name="PriorResults">Dated results from before the service's records, for the history plot and the aging fit.</param>
public sealed record CertificateIssueRequest(long? BudgetId, int? Version, DateTimeOffset? ReceivedAt, string? ItemCondition, IReadOnlyList<string>? CustomerAddress,
    bool? Adjusted, long? AsLeftBudgetId, int? AsLeftVersion, ToleranceRequest? Tolerance, DecisionRuleRequest? DecisionRule, RecallRequest? RecallInterval,
    IReadOnlyList<PriorResultRequest>? PriorResults);

/// <summary>Tolerance limits of the fractional frequency offset; one may be absent (one-sided).</summary>
/// <param name="Lower">T_L.</param>
/// <param name="Upper">T_U.</param>
public sealed record ToleranceRequest(double? Lower, double? Upper);

/// <summary>An ILAC-G8:09/2019 decision rule.</summary>
/// <param name="Kind">"simple-acceptance", "guard-band" or "non-binary".</param>
/// <param name="GuardBandMultiple">For "guard-band": w = r U with this r (default 1).</param>
/// <param name="LowRatioReason">Simple acceptance below the lab's minimum test uncertainty ratio (CalBudget:MinimumTestUncertaintyRatio) needs this reason; it is printed.</param>
public sealed record DecisionRuleRequest(string? Kind, double? GuardBandMultiple, string? LowRatioReason = null);

/// <summary>The customer's request for a recall interval.</summary>
/// <param name="LongestDays">The longest interval the lab states (default 730).</param>
public sealed record RecallRequest(int? LongestDays);

/// <summary>A dated earlier result.</summary>
/// <param name="Date">When.</param>
/// <param name="FractionalOffset">y then.</param>
/// <param name="ExpandedUncertainty">U then.</param>
/// <param name="CoverageFactor">k of that U (default 2).</param>
/// <param name="Adjusted">True when the item was adjusted at that calibration: the aging fit starts again from that result.</param>
public sealed record PriorResultRequest(DateTimeOffset? Date, double? FractionalOffset, double? ExpandedUncertainty, double? CoverageFactor = null, bool? Adjusted = null);

/// <summary>Amend a certificate: a new certificate that names and replaces it.</summary>
/// <param name="Note">What the amendment changes and why (required; printed on the new certificate).</param>
/// <param name="Changes">The settings that change; absent keeps every setting of the certificate amended.</param>
public sealed record CertificateAmendRequest(string? Note, CertificateIssueRequest? Changes);

/// <summary>Withdraw a certificate.</summary>
/// <param name="Reason">Why (required).</param>
public sealed record CertificateWithdrawRequest(string? Reason);

/// <summary>A certificate's metadata; the PDF is at <c>pdf</c>.</summary>
/// <param name="Id">Its id.</param>
/// <param name="Number">The certificate number.</param>
/// <param name="State">issued, amended (replaced by replacedBy) or withdrawn.</param>
/// <param name="BudgetId">The budget it states.</param>
/// <param name="BudgetVersion">The approved version.</param>
/// <param name="InstrumentId">The instrument.</param>
/// <param name="Customer">The customer.</param>
/// <param name="Replaces">The certificate this one amends.</param>
/// <param name="ReplacedBy">The amendment that replaced this one.</param>
/// <param name="AmendmentNote">The amendment note.</param>
/// <param name="IssuedAt">When.</param>
/// <param name="IssuedBy">By whom.</param>
/// <param name="WithdrawnAt">When withdrawn.</param>
/// <param name="WithdrawnBy">By whom.</param>
/// <param name="WithdrawnReason">Why.</param>
/// <param name="PdfSha256">SHA-256 of the stored PDF: the bytes served are always these.</param>
/// <param name="PdfBytes">Its length.</param>
/// <param name="Pdf">Where to get it.</param>
/// <param name="Result">The stated result: calibratedAt, estimate, standardUncertainty, expandedUncertainty, coverageFactor.</param>
/// <param name="Decision">The conformity decision with its numbers, when asked for.</param>
/// <param name="Recall">The recall interval, when asked for.</param>
public sealed record CertificateDto(long Id, string Number, string State, long BudgetId, int BudgetVersion, long InstrumentId, string Customer, long? Replaces,
    long? ReplacedBy, string? AmendmentNote, DateTimeOffset IssuedAt, string IssuedBy, DateTimeOffset? WithdrawnAt, string? WithdrawnBy, string? WithdrawnReason,
    string PdfSha256, long PdfBytes, string Pdf, JsonElement Result, JsonElement? Decision, JsonElement? Recall);

/// <summary>The stated result stored with a certificate.</summary>
/// <param name="CalibratedAt">The run's start.</param>
/// <param name="Estimate">y.</param>
/// <param name="StandardUncertainty">u_c.</param>
/// <param name="ExpandedUncertainty">U.</param>
/// <param name="CoverageFactor">k.</param>
/// <param name="CoverageProbability">p.</param>
/// <param name="EffectiveDegreesOfFreedom">nu_eff of the budget, null when infinite (p_c is computed from a t-distribution with it).</param>
/// <param name="Governs">"GUM", "Monte Carlo" (the GUM result was not validated) or "CMC" (U raised to the lab's CMC).</param>
/// <param name="CoverageInterval">The stated coverage interval.</param>
public sealed record StatedResult(DateTimeOffset CalibratedAt, double Estimate, double StandardUncertainty, double ExpandedUncertainty, double CoverageFactor, double CoverageProbability,
    double? EffectiveDegreesOfFreedom = null, string Governs = "GUM", double[]? CoverageInterval = null);

/// <summary>The decision stored with a certificate.</summary>
/// <param name="Rule">The rule's name.</param>
/// <param name="Lower">T_L.</param>
/// <param name="Upper">T_U.</param>
/// <param name="Outcome">pass, conditional pass, conditional fail or fail.</param>
/// <param name="GuardBand">w.</param>
/// <param name="AcceptanceLower">T_L + w.</param>
/// <param name="AcceptanceUpper">T_U - w.</param>
/// <param name="ProbabilityOfConformity">p_c from the distribution of the stated interval: t with nu_eff (normal when infinite; JCGM 106 with the GUM's t).</param>
/// <param name="MonteCarloProbabilityOfConformity">p_c from the budget's Monte Carlo run, when it has one.</param>
/// <param name="TestUncertaintyRatio">(T_U - T_L) / 2U.</param>
/// <param name="Governs">Which p_c the certificate states as governing: "t", "normal" or "Monte Carlo".</param>
/// <param name="LowRatioReason">The reason given for simple acceptance below the lab's minimum TUR.</param>
public sealed record StoredDecision(string Rule, double? Lower, double? Upper, string Outcome, double GuardBand, double? AcceptanceLower, double? AcceptanceUpper,
    double ProbabilityOfConformity, double? MonteCarloProbabilityOfConformity, double? TestUncertaintyRatio, string Governs = "normal", string? LowRatioReason = null);

/// <summary>The recall interval stored with a certificate.</summary>
/// <param name="Days">Days after calibration; null beyond the longest interval.</param>
/// <param name="RecallDate">The date, when found.</param>
/// <param name="LongestDays">The ceiling.</param>
/// <param name="Method">How it was found.</param>
public sealed record StoredRecall(int? Days, DateTimeOffset? RecallDate, int LongestDays, string Method);
