using System.Globalization;
using System.Security.Cryptography;
using System.Text.Json;
using CalBudget.Api.Auth;
using CalBudget.Api.Budgets;
using CalBudget.Api.Hosting;
using CalBudget.Api.Instruments;
using CalBudget.Core;
using CalBudget.Core.Conformity;
using CalBudget.Data;
using CalBudget.Data.Budgets;
using CalBudget.Data.Calibrations;
using CalBudget.Data.Certificates;
using CalBudget.Data.Instruments;
using CalBudget.Data.References;
using CalBudget.Reports;
using Microsoft.AspNetCore.Http.HttpResults;
using Microsoft.AspNetCore.Http.Json;
using Microsoft.Extensions.Options;

namespace CalBudget.Api.Certificates;

/// <summary>The fonts, the renderer and the lab's wording, set up once at start (a missing font or a bad wording file stops the start).</summary>
/// <param name="Renderer">The PDF layout.</param>
/// <param name="Wording">The lab's wording blocks.</param>
/// <param name="Fonts">The faces found at start (plots on the staff pages use them too).</param>
/// <param name="Signature">The laboratory's signature on issued PDFs; null in Production without a configured signing certificate (nothing is issued then).</param>
public sealed record CertificateSetup(CertificateRenderer Renderer, CertificateWording Wording, Reports.Fonts.CertificateFonts Fonts, CertificateSignature? Signature = null);

/// <summary>/api/v1/certificates: issue from an approved budget version, read, the PDF, amend, withdraw, list.</summary>
public static class CertificatesApi
{
    private const string DefaultNumberPattern = "HTF-{yyyy}-{seq:0000}";

    /// <summary>Maps the routes.</summary>
    public static IEndpointRouteBuilder MapCertificatesApi(this IEndpointRouteBuilder routes)
    {
        var read = routes.MapGroup("/api/v1/certificates").WithTags("Certificates").RequireAuthorization(Policies.AnyRole);
        read.MapGet("/", List).WithName("ListCertificates").WithSummary("Certificates in id order, a page at a time (filters: instrumentId, customer)")
            .ProducesValidationProblem(StatusCodes.Status400BadRequest);
        read.MapGet("/{id:long}", Get).WithName("GetCertificate").WithSummary("A certificate's metadata: number, state, the amendment chain, SHA-256 of the PDF, result, decision, recall")
            .ProducesProblem(StatusCodes.Status404NotFound);
        read.MapGet("/{id:long}.pdf", Pdf).WithName("GetCertificatePdf").WithSummary("The PDF exactly as issued (its SHA-256 is in the metadata), whatever the state")
            .Produces<byte[]>(StatusCodes.Status200OK, "application/pdf").ProducesProblem(StatusCodes.Status404NotFound);

        routes.MapGroup("/api/v1/certificates").WithTags("Certificates").RequireAuthorization(Policies.Issuer)
            .MapPost("/", Issue).WithName("IssueCertificate").WithSummary("Issue a certificate from an approved budget version")
            .WithDescription("The PDF is signed with the laboratory's key (503 in Production when none is configured). 409 when the version is not approved (a draft or superseded one), "
                + "already has a certificate in force, its run's reference was overdue on the run's date, or the records hold an as-left run while the request says no adjustment; "
                + "422 names a date out of order or in the future, an as-left budget of another instrument or run, a budget or version that does not exist, or a recall "
                + "interval without the three dated results an aging fit needs. The tolerance defaults to the instrument's specification; a decision rule without "
                + "either is refused (400, tolerance).")
            .Accepts<CertificateIssueRequest>("application/json")
            .Produces<CertificateDto>(StatusCodes.Status201Created)
            .ProducesValidationProblem(StatusCodes.Status400BadRequest).ProducesProblem(StatusCodes.Status409Conflict).ProducesValidationProblem(StatusCodes.Status422UnprocessableEntity)
            .ProducesProblem(StatusCodes.Status503ServiceUnavailable);

        var approve = routes.MapGroup("/api/v1/certificates").WithTags("Certificates").RequireAuthorization(Policies.Approver);
        approve.MapPost("/{id:long}/amend", Amend).WithName("AmendCertificate")
            .WithSummary("A new certificate that names and replaces this one (which becomes amended and stays retrievable), with the amendment note")
            .WithDescription("409 when the certificate is withdrawn or already amended (amend the newest).")
            .Accepts<CertificateAmendRequest>("application/json")
            .Produces<CertificateDto>(StatusCodes.Status201Created)
            .ProducesValidationProblem(StatusCodes.Status400BadRequest).ProducesProblem(StatusCodes.Status404NotFound).ProducesProblem(StatusCodes.Status409Conflict)
            .ProducesValidationProblem(StatusCodes.Status422UnprocessableEntity).ProducesProblem(StatusCodes.Status503ServiceUnavailable);
        approve.MapPost("/{id:long}/withdraw", Withdraw).WithName("WithdrawCertificate").WithSummary("Withdraw an issued certificate, with the reason")
            .Accepts<CertificateWithdrawRequest>("application/json")
            .Produces<CertificateDto>(StatusCodes.Status200OK)
            .ProducesValidationProblem(StatusCodes.Status400BadRequest).ProducesProblem(StatusCodes.Status404NotFound).ProducesProblem(StatusCodes.Status409Conflict);
        return routes;
    }

    /// <summary>GET /api/v1/certificates.</summary>
    public static async Task<Results<Ok<Page<CertificateDto>>, ProblemHttpResult>> List(CertificateStore store, IOptions<JsonOptions> json, int? limit, string? cursor,
        long? instrumentId, string? customer, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(store);
        var errors = new FieldErrors();
        var (take, after) = Conventions.PageRequest(limit, cursor, errors);
        if (!errors.IsEmpty)
        {
            return Problems.Invalid(errors.ToDictionary());
        }

        var rows = await store.ListAsync(after, take + 1, instrumentId, customer, ct);
        return TypedResults.Ok(Conventions.Page(rows, take, c => ToDto(c, json), c => c.Id));
    }

    /// <summary>GET /api/v1/certificates/{id}.</summary>
    public static async Task<Results<Ok<CertificateDto>, ProblemHttpResult>> Get(long id, CertificateStore store, IOptions<JsonOptions> json, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(store);
        return await store.GetAsync(id, ct) is { } c ? TypedResults.Ok(ToDto(c, json)) : NotFound(id);
    }

    /// <summary>GET /api/v1/certificates/{id}.pdf.</summary>
    public static async Task<Results<FileContentHttpResult, ProblemHttpResult>> Pdf(long id, CertificateStore store, HttpResponse response, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(store);
        ArgumentNullException.ThrowIfNull(response);
        if (await store.GetAsync(id, ct) is not { } c || await store.PdfAsync(id, ct) is not { } pdf)
        {
            return NotFound(id);
        }

        response.Headers.ETag = "\"" + c.PdfSha256 + "\"";
        response.Headers["X-Certificate-State"] = c.State;
        return TypedResults.File(pdf, "application/pdf", c.Number + ".pdf");
    }

    /// <summary>POST /api/v1/certificates.</summary>
    public static async Task<IResult> Issue(CertificateIssueRequest request, HttpContext http, IDbConnectionFactory database, TimeProvider time, CertificateSetup setup,
        ReadingStore readings, IOptions<JsonOptions> json, IOptions<CalBudgetOptions> options, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(request);
        ArgumentNullException.ThrowIfNull(time);
        if (Check(request, "") is { } invalid)
        {
            return invalid;
        }

        await using var work = await UnitOfWork.BeginAsync(database, ct);
        return await IssueAsync(work, request, null, null, http, time.GetUtcNow(), setup, readings, json, options.Value, ct);
    }

    /// <summary>POST /api/v1/certificates/{id}/amend.</summary>
    public static async Task<IResult> Amend(long id, CertificateAmendRequest request, HttpContext http, IDbConnectionFactory database, TimeProvider time,
        CertificateSetup setup, ReadingStore readings, IOptions<JsonOptions> json, IOptions<CalBudgetOptions> options, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(request);
        ArgumentNullException.ThrowIfNull(time);
        ArgumentNullException.ThrowIfNull(json);
        var errors = new FieldErrors();
        string? note = errors.Text(request.Note, "note", 1000);
        if (!errors.IsEmpty)
        {
            return Problems.Invalid(errors.ToDictionary());
        }

        if (!Conventions.IsNamedPerson(http.User))
        {
            return Conventions.Unnamed(http.User);
        }

        await using var work = await UnitOfWork.BeginAsync(database, ct);
        if (await CertificateStore.GetAsync(work, id) is not { } old)
        {
            return NotFound(id);
        }

        if (old.State != CertificateStates.Issued)
        {
            return Problems.Status(StatusCodes.Status409Conflict, $"Certificate {old.Number} is {old.State}.",
                old.State == CertificateStates.Withdrawn ? "A withdrawn certificate is not amended; issue a new one." : $"It was replaced by certificate id {old.ReplacedById}; amend that one.");
        }

        var before = JsonSerializer.Deserialize<CertificateIssueRequest>(old.Settings, json.Value.SerializerOptions)!;
        var c = request.Changes;
        var merged = c is null ? before : new CertificateIssueRequest(c.BudgetId ?? before.BudgetId, c.Version ?? before.Version, c.ReceivedAt ?? before.ReceivedAt,
            c.ItemCondition ?? before.ItemCondition, c.CustomerAddress ?? before.CustomerAddress, c.Adjusted ?? before.Adjusted, c.AsLeftBudgetId ?? before.AsLeftBudgetId,
            c.AsLeftVersion ?? before.AsLeftVersion, c.Tolerance ?? before.Tolerance, c.DecisionRule ?? before.DecisionRule, c.RecallInterval ?? before.RecallInterval,
            c.PriorResults ?? before.PriorResults);
        if (Check(merged, "changes.") is { } invalid)
        {
            return invalid;
        }

        return await IssueAsync(work, merged, old, note, http, time.GetUtcNow(), setup, readings, json, options.Value, ct);
    }

    /// <summary>POST /api/v1/certificates/{id}/withdraw.</summary>
    public static async Task<Results<Ok<CertificateDto>, ProblemHttpResult>> Withdraw(long id, CertificateWithdrawRequest request, HttpContext http, IDbConnectionFactory database,
        TimeProvider time, IOptions<JsonOptions> json, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(request);
        ArgumentNullException.ThrowIfNull(http);
        ArgumentNullException.ThrowIfNull(time);
        var errors = new FieldErrors();
        string? reason = errors.Text(request.Reason, "reason", 1000);
        if (!errors.IsEmpty || reason is null)
        {
            return Problems.Invalid(errors.ToDictionary());
        }

        if (!Conventions.IsNamedPerson(http.User))
        {
            return Conventions.Unnamed(http.User);
        }

        var now = time.GetUtcNow();
        await using var work = await UnitOfWork.BeginAsync(database, ct);
        if (await CertificateStore.GetAsync(work, id) is not { } c)
        {
            return NotFound(id);
        }

        if (c.State != CertificateStates.Issued)
        {
            return Problems.Status(StatusCodes.Status409Conflict, $"Certificate {c.Number} is {c.State}.", "Only a certificate in force can be withdrawn.");
        }

        await CertificateStore.WithdrawAsync(work, id, reason, Conventions.Actor(http.User), now);
        var dto = ToDto((await CertificateStore.GetAsync(work, id))!, json);
        await AuditTrail.RecordAsync(work, http, now, "withdraw", "certificate", id, reason, dto);
        await work.CommitAsync(ct);
        return TypedResults.Ok(dto);
    }

    private static ProblemHttpResult? Check(CertificateIssueRequest r, string prefix)
    {
        var errors = new FieldErrors();
        if (r.BudgetId is null)
        {
            errors.Add(prefix + "budgetId", "Required: the budget whose approved version the certificate states.");
        }

        if (r.Version is null)
        {
            errors.Add(prefix + "version", "Required: the approved version.");
        }

        if (r.ReceivedAt is null)
        {
            errors.Add(prefix + "receivedAt", "Required: when the item was received.");
        }

        errors.Text(r.ItemCondition, prefix + "itemCondition", 500);
        if (r.CustomerAddress is { } address)
        {
            if (address.Count > 6)
            {
                errors.Add(prefix + "customerAddress", "At most 6 lines.");
            }

            for (int i = 0; i < address.Count; i++)
            {
                errors.Text(address[i], $"{prefix}customerAddress[{i}]", 200);
            }
        }

        if (r.Adjusted == true && (r.AsLeftBudgetId is null || r.AsLeftVersion is null))
        {
            errors.Add(prefix + "asLeftBudgetId", "An adjusted item needs the approved budget of its as-left run (asLeftBudgetId and asLeftVersion).");
        }

        if (r.Tolerance is { } t)
        {
            try
            {
                _ = ToleranceLimits.Create(t.Lower, t.Upper);
            }
            catch (MetrologyException ex)
            {
                errors.Add(prefix + ex.Parameter, ex.Message);
            }
        }

        if (r.DecisionRule is { } rule)
        {
            if (rule.Kind is not ("simple-acceptance" or "guard-band" or "non-binary"))
            {
                errors.Add(prefix + "decisionRule.kind", "One of simple-acceptance, guard-band, non-binary.");
            }

            if (rule.GuardBandMultiple is { } m && !(double.IsFinite(m) && m >= 0))
            {
                errors.Add(prefix + "decisionRule.guardBandMultiple", "Must be a finite number >= 0.");
            }

            errors.Text(rule.LowRatioReason, prefix + "decisionRule.lowRatioReason", 1000, required: false);
        }

        if (r.RecallInterval?.LongestDays is { } longest && longest is < 1 or > 36_525)
        {
            errors.Add(prefix + "recallInterval.longestDays", "Between 1 and 36525 days.");
        }

        for (int i = 0; r.PriorResults is { } prior && i < prior.Count; i++)
        {
            string at = $"{prefix}priorResults[{i}]";
            if (prior[i] is null || prior[i].Date is null)
            {
                errors.Add(at + ".date", "Required.");
                continue;
            }

            errors.Finite(prior[i].FractionalOffset, at + ".fractionalOffset");
            errors.Positive(prior[i].ExpandedUncertainty, at + ".expandedUncertainty");
            errors.Positive(prior[i].CoverageFactor, at + ".coverageFactor");
        }

        return errors.IsEmpty ? null : Problems.Invalid(errors.ToDictionary());
    }

    private static async Task<IResult> IssueAsync(UnitOfWork work, CertificateIssueRequest request, Certificate? replaces, string? note, HttpContext http, DateTimeOffset now,
        CertificateSetup setup, ReadingStore readings, IOptions<JsonOptions> json, CalBudgetOptions options, CancellationToken ct)
    {
        var o = json.Value.SerializerOptions;
        var found = await ApprovedAsync(work, request.BudgetId!.Value, request.Version!.Value, "", json);
        if (found.Problem is { } problem)
        {
            return problem;
        }

        var (budget, version, lines, evaluate, result) = found.Value!.Value;
        var run = (await CalibrationRunStore.GetAsync(work, budget.RunId))!;
        var stages = StoredBudgetsApi.Stages(version, json);
        var asFound = Stated(run.Fields.StartedAt, result, stages?.Calibration);
        StatedResult? asLeft = null;
        var prediction = stages?.Prediction;
        var calibration = stages?.Calibration;
        if (request.Adjusted == true)
        {
            var left = await ApprovedAsync(work, request.AsLeftBudgetId!.Value, request.AsLeftVersion!.Value, "asLeft", json);
            if (left.Problem is { } leftProblem)
            {
                return leftProblem;
            }

            var leftRun = (await CalibrationRunStore.GetAsync(work, left.Value!.Value.Budget.RunId))!;
            var leftStages = StoredBudgetsApi.Stages(left.Value.Value.Version, json);
            asLeft = Stated(leftRun.Fields.StartedAt, left.Value.Value.Result, leftStages?.Calibration);
            prediction = leftStages?.Prediction;
            calibration = leftStages?.Calibration;
        }

        var instrument = (await InstrumentStore.GetAsync(work, run.Fields.InstrumentId))!;
        var reference = (await ReferenceStandardStore.GetAsync(work, run.Fields.ReferenceId))!;
        if (await CheckAtIssueAsync(work, request, replaces, run, reference, now) is { } refused)
        {
            return refused;
        }

        var spec = JsonSerializer.Deserialize<TimebaseSpecificationDto>(instrument.Fields.SpecificationJson, o)!;
        double[] values = version.ReadingUploadId is { } uploadId ? await readings.FractionalOffsetsAsync(uploadId, ct) : [];

        var history = await InstrumentHistory.CertificatesAsync(work, instrument.Id, run.Fields.StartedAt, budget.Id, o);
        history.AddRange((request.PriorResults ?? []).Select(p => new HistoryPoint(p.Date!.Value, p.FractionalOffset!.Value, p.ExpandedUncertainty!.Value, p.CoverageFactor ?? 2,
            p.Adjusted == true)));
        string number = await NextNumberAsync(work, options.CertificateNumberPattern, now);
        string approver = await Data.Keys.ApiKeyStore.PersonAsync(work, version.ApprovedBy!);
        var facts = new CertificateFacts(number, now, Conventions.Person(http.User), approver, version.MadeByPerson, setup.Wording, request, instrument, spec, run, reference, values, version, lines,
            evaluate, result, asLeft, await SensitivityTestStore.LatestAsync(work, instrument.Id), history, replaces?.Number, note)
        {
            AsFound = asFound,
            Calibration = calibration,
            Prediction = prediction,
        };
        ComposedCertificate composed;
        try
        {
            composed = CertificateComposer.Compose(facts, options.MonteCarloMaxTrials, options.MinimumTestUncertaintyRatio);
        }
        catch (MetrologyException ex)
        {
            return Problems.FromMetrology(ex);
        }

        if (setup.Signature is null)
        {
            return Problems.Status(StatusCodes.Status503ServiceUnavailable, "No signing certificate is configured.",
                "An issued certificate carries the laboratory's digital signature: set CalBudget:SigningCertificatePath (a PKCS#12 file) and SigningCertificatePassword.");
        }

        byte[] pdf = setup.Renderer.Render(composed.Content, setup.Signature);
        string sha = Convert.ToHexStringLower(SHA256.HashData(pdf));
        long id = await CertificateStore.IssueAsync(work, new NewCertificate(number, budget.Id, version.Number, instrument.Id, instrument.Fields.Customer, replaces?.Id, note,
            JsonSerializer.Serialize(request, o), JsonSerializer.Serialize(composed.Result, o),
            composed.Decision is null ? null : JsonSerializer.Serialize(composed.Decision, o), composed.Recall is null ? null : JsonSerializer.Serialize(composed.Recall, o),
            JsonSerializer.Serialize(composed.Content, o), pdf, sha), Conventions.Actor(http.User), now);
        var dto = ToDto((await CertificateStore.GetAsync(work, id))!, json);
        await AuditTrail.RecordAsync(work, http, now, replaces is null ? "issue" : "amend", "certificate", id, note, dto);
        if (replaces is not null)
        {
            await AuditTrail.RecordAsync(work, http, now, "replace", "certificate", replaces.Id, note, ToDto((await CertificateStore.GetAsync(work, replaces.Id))!, json));
        }

        await work.CommitAsync(ct);
        return TypedResults.Created($"/api/v1/certificates/{id}", dto);
    }

    /// <summary>
    /// What must hold at the moment of issue, each refusal naming the field: receipt before calibration before issue, none
    /// in the future (the service's clock); the reference usable on the run's date; one certificate in force per budget
    /// version (an amendment replaces it); an as-left result of the same instrument, made after the as-found run with a
    /// usable reference; and no as-found-only certificate when the records hold an as-left run of the same calibration.
    /// </summary>
    private static async Task<ProblemHttpResult?> CheckAtIssueAsync(UnitOfWork work, CertificateIssueRequest request, Certificate? replaces, CalibrationRun run,
        ReferenceStandard reference, DateTimeOffset now)
    {
        static ProblemHttpResult Invalid(string field, string message) => Problems.NotComputable(new Dictionary<string, string[]> { [field] = [message] });
        var calibrated = run.Fields.StartedAt;
        var received = request.ReceivedAt!.Value;
        if (received > now)
        {
            return Invalid("receivedAt", $"The date of receipt {received:yyyy-MM-dd HH:mm} UTC is in the future (now {now:yyyy-MM-dd HH:mm} UTC).");
        }

        if (received > calibrated)
        {
            return Invalid("receivedAt", $"The item was received ({received:yyyy-MM-dd HH:mm} UTC) after its calibration started ({calibrated:yyyy-MM-dd HH:mm} UTC).");
        }

        if (calibrated > now)
        {
            return Invalid("budgetId", $"The budget's run starts in the future ({calibrated:yyyy-MM-dd HH:mm} UTC).");
        }

        if (reference.Fields.DueDate < calibrated)
        {
            return Problems.Conflict("budgetId", "The reference standard was overdue on the run's date.",
                $"The reference '{reference.Fields.Identity}' fell due on {reference.Fields.DueDate:yyyy-MM-dd}, before the run of {calibrated:yyyy-MM-dd}: the result is not traceable.");
        }

        if (await CertificateStore.InForceForVersionAsync(work, request.BudgetId!.Value, request.Version!.Value) is { } existing && existing.Id != replaces?.Id)
        {
            return Problems.Conflict("version", $"Budget {request.BudgetId} version {request.Version} already has certificate {existing.Number}.",
                $"Certificate {existing.Number} states this version; a second one is not issued. Amend it (POST /api/v1/certificates/{existing.Id}/amend) to replace it.");
        }

        if (request.Adjusted == true)
        {
            var left = (await BudgetStore.GetAsync(work, request.AsLeftBudgetId!.Value))!;
            var leftRun = (await CalibrationRunStore.GetAsync(work, left.RunId))!;
            if (leftRun.Fields.InstrumentId != run.Fields.InstrumentId)
            {
                return Invalid("asLeftBudgetId", $"The as-left budget is of run {leftRun.Id} of instrument {leftRun.InstrumentAssetNumber}, not of {run.InstrumentAssetNumber}.");
            }

            if (leftRun.Fields.Condition != "as-left")
            {
                return Invalid("asLeftBudgetId", $"Run {leftRun.Id} of the as-left budget is recorded {leftRun.Fields.Condition}.");
            }

            if (leftRun.Fields.StartedAt <= calibrated)
            {
                return Invalid("asLeftBudgetId", $"The as-left run {leftRun.Id} ({leftRun.Fields.StartedAt:yyyy-MM-dd HH:mm} UTC) does not come after the as-found run ({calibrated:yyyy-MM-dd HH:mm} UTC).");
            }

            if (leftRun.Fields.StartedAt > now)
            {
                return Invalid("asLeftBudgetId", $"The as-left run {leftRun.Id} starts in the future.");
            }

            var leftReference = (await ReferenceStandardStore.GetAsync(work, leftRun.Fields.ReferenceId))!;
            if (leftReference.Fields.DueDate < leftRun.Fields.StartedAt)
            {
                return Problems.Conflict("asLeftBudgetId", "The as-left run's reference standard was overdue on its date.",
                    $"The reference '{leftReference.Fields.Identity}' fell due on {leftReference.Fields.DueDate:yyyy-MM-dd}, before the as-left run of {leftRun.Fields.StartedAt:yyyy-MM-dd}.");
            }
        }
        else if (run.Fields.Condition == "as-found")
        {
            // the same calibration: the runs after this one up to the next as-found run of the instrument
            foreach (var later in await CalibrationRunStore.LaterAsync(work, run.Fields.InstrumentId, calibrated))
            {
                if (later.Fields.Condition == "as-found")
                {
                    break;
                }

                return Problems.Conflict("adjusted", "The records hold an as-left run of this calibration.",
                    $"Run {later.Id} of {run.InstrumentAssetNumber} ({later.Fields.StartedAt:yyyy-MM-dd HH:mm} UTC) is as left: the item was adjusted. Issue with adjusted: true and the approved budget of that run (asLeftBudgetId, asLeftVersion).");
            }
        }

        return null;
    }

    // The calibration result as the version states it (the CMC floor, which evaluation governs); a version made before the
    // two results were kept apart states its one result as approved.
    private static StatedResult Stated(DateTimeOffset at, EvaluateResponse r, CalibrationResultDto? c) => c is null
        ? new StatedResult(at, r.Estimate, r.CombinedStandardUncertainty, r.ExpandedUncertainty, r.CoverageFactor, r.CoverageProbability, r.EffectiveDegreesOfFreedom)
        : new StatedResult(at, c.Estimate, c.StandardUncertainty, c.ExpandedUncertainty, c.CoverageFactor, c.CoverageProbability, c.EffectiveDegreesOfFreedom, c.Governs,
            c.CoverageInterval);

    private sealed record Approved(ProblemHttpResult? Problem, (Budget Budget, BudgetVersion Version, IReadOnlyList<BudgetLineDto> Lines, EvaluateRequest Evaluate, EvaluateResponse Result)? Value);

    private static async Task<Approved> ApprovedAsync(UnitOfWork work, long budgetId, int number, string prefix, IOptions<JsonOptions> json)
    {
        string budgetField = prefix.Length == 0 ? "budgetId" : prefix + "BudgetId", versionField = prefix.Length == 0 ? "version" : prefix + "Version";
        if (await BudgetStore.GetAsync(work, budgetId) is not { } budget)
        {
            return new(Problems.NotComputable(new Dictionary<string, string[]> { [budgetField] = [$"No budget has the id {budgetId}."] }), null);
        }

        if (await BudgetStore.VersionAsync(work, budgetId, number) is not { } version)
        {
            return new(Problems.NotComputable(new Dictionary<string, string[]> { [versionField] = [$"Budget {budgetId} has no version {number}."] }), null);
        }

        if (version.State != BudgetStates.Approved)
        {
            return new(Problems.Conflict(versionField, $"Version {number} of budget {budgetId} is {version.State}.",
                "A certificate is issued only from an approved budget version: have a second person approve it first (POST /api/v1/budgets/{id}/versions/{n}/approve)."), null);
        }

        var (lines, evaluate, result) = StoredBudgetsApi.Contents(version, json);
        return new(null, (budget, version, lines, evaluate, result));
    }

    /// <summary>Expands the number pattern: {yyyy}, {yy}, {MM} from the date, {seq} or {seq:0000} counting the numbers that share the text before it.</summary>
    public static async Task<string> NextNumberAsync(UnitOfWork work, string pattern, DateTimeOffset now)
    {
        string p = string.IsNullOrWhiteSpace(pattern) ? DefaultNumberPattern : pattern;
        string dated = p.Replace("{yyyy}", now.ToString("yyyy", CultureInfo.InvariantCulture), StringComparison.Ordinal)
            .Replace("{yy}", now.ToString("yy", CultureInfo.InvariantCulture), StringComparison.Ordinal)
            .Replace("{MM}", now.ToString("MM", CultureInfo.InvariantCulture), StringComparison.Ordinal);
        int at = dated.IndexOf("{seq", StringComparison.Ordinal);
        if (at < 0)
        {
            dated += "-{seq}";
            at = dated.IndexOf("{seq", StringComparison.Ordinal);
        }

        int close = dated.IndexOf('}', at);
        string token = dated[at..(close + 1)];
        string format = token.Length > 5 && token[4] == ':' ? token[5..^1] : "0";
        string prefix = dated[..at];
        long next = await CertificateStore.CountWithPrefixAsync(work, prefix) + 1;
        return prefix + next.ToString(format, CultureInfo.InvariantCulture) + dated[(close + 1)..];
    }

    private static CertificateDto ToDto(Certificate c, IOptions<JsonOptions> json)
    {
        var o = json.Value.SerializerOptions;
        JsonElement Parse(string text) => JsonSerializer.Deserialize<JsonElement>(text, o);
        return new CertificateDto(c.Id, c.Number, c.State, c.BudgetId, c.BudgetVersion, c.InstrumentId, c.Customer, c.ReplacesId, c.ReplacedById, c.AmendmentNote, c.IssuedAt,
            c.IssuedBy, c.WithdrawnAt, c.WithdrawnBy, c.WithdrawnReason, c.PdfSha256, c.PdfBytes, $"/api/v1/certificates/{c.Id}.pdf", Parse(c.Result),
            c.Decision is null ? null : Parse(c.Decision), c.Recall is null ? null : Parse(c.Recall));
    }

    private static ProblemHttpResult NotFound(long id) => Problems.Status(StatusCodes.Status404NotFound, "No such certificate.", $"No certificate has the id {id}.");
}
