using System.Text.Json;
using CalBudget.Api.Analytics;
using CalBudget.Api.Auth;
using CalBudget.Api.Hosting;
using CalBudget.Api.Instruments;
using CalBudget.Core;
using CalBudget.Core.Budgets;
using CalBudget.Core.Gum;
using CalBudget.Data;
using CalBudget.Data.Budgets;
using CalBudget.Data.Calibrations;
using CalBudget.Data.Instruments;
using CalBudget.Data.References;
using Microsoft.AspNetCore.Http.HttpResults;
using Microsoft.AspNetCore.Http.Json;
using Microsoft.Extensions.Options;

namespace CalBudget.Api.Budgets;

/// <summary>Stored budgets under <c>/api/v1/budgets</c> and the templates under <c>/api/v1/templates</c>.</summary>
public static class StoredBudgetsApi
{
    /// <summary>What an approval means when the approver does not say.</summary>
    public const string DefaultMeaning = "Reviewed and approved as the uncertainty budget of this calibration.";

    private static readonly string EngineVersion = "CalBudget.Core " + (typeof(TimebaseBudget).Assembly.GetName().Version?.ToString() ?? "0");

    /// <summary>Maps the routes.</summary>
    public static IEndpointRouteBuilder MapStoredBudgetsApi(this IEndpointRouteBuilder routes)
    {
        routes.MapGroup("/api/v1/templates").WithTags("Budgets").RequireAuthorization(Policies.AnyRole)
            .MapGet("/", Templates).WithName("ListTemplates").WithSummary("The lab's budget templates, with their versions and lines");

        var read = routes.MapGroup("/api/v1/budgets").WithTags("Budgets").RequireAuthorization(Policies.AnyRole);
        read.MapGet("/", List).WithName("ListBudgets").WithSummary("Stored budgets in id order, a page at a time (filters: runId, instrumentId)")
            .ProducesValidationProblem(StatusCodes.Status400BadRequest);
        read.MapGet("/{id:long}", Get).WithName("GetBudget").WithSummary("A budget with its newest version in full (ETag: that version's number)")
            .ProducesProblem(StatusCodes.Status404NotFound);
        read.MapGet("/{id:long}/versions", Versions).WithName("ListBudgetVersions").WithSummary("Every version, oldest first")
            .ProducesProblem(StatusCodes.Status404NotFound);
        read.MapGet("/{id:long}/versions/{number:int}", Version).WithName("GetBudgetVersion").WithSummary("One version in full: lines, sources, snapshot, result")
            .ProducesProblem(StatusCodes.Status404NotFound);
        read.MapGet("/{id:long}/diff", Diff).WithName("DiffBudgetVersions").WithSummary("Two versions contribution by contribution (?from=&to=)")
            .ProducesValidationProblem(StatusCodes.Status400BadRequest).ProducesProblem(StatusCodes.Status404NotFound);

        var write = routes.MapGroup("/api/v1/budgets").WithTags("Budgets").RequireAuthorization(Policies.Writer);
        write.MapPost("/", Create).WithName("CreateBudget").WithSummary("Build a budget from a calibration run and a template: version 1, a draft")
            .WithDescription("Each template line takes its value from the run, its reference standard, the instrument's specification and the posture policy "
                + "(see templates/README.md); an override replaces a line and needs a reason. 422 names what is missing: an unknown run or template, a template "
                + "not for this oscillator kind, a run without readings where a Type A line needs them, a specification value a line needs.")
            .Accepts<BudgetBuildRequest>("application/json")
            .Produces<BudgetDto>(StatusCodes.Status201Created)
            .ProducesValidationProblem(StatusCodes.Status400BadRequest).ProducesValidationProblem(StatusCodes.Status422UnprocessableEntity);
        write.MapPost("/{id:long}/versions", Revise).WithName("ReviseBudget").WithSummary("A new draft version, rebuilt from the run's current data, with a reason (If-Match: the newest version)")
            .Accepts<BudgetRevisionRequest>("application/json")
            .Produces<BudgetDto>(StatusCodes.Status201Created)
            .ProducesChangeRefusals().ProducesValidationProblem(StatusCodes.Status422UnprocessableEntity);

        routes.MapGroup("/api/v1/budgets").WithTags("Budgets").RequireAuthorization(Policies.Approver)
            .MapPost("/{id:long}/versions/{number:int}/approve", Approve).WithName("ApproveBudgetVersion")
            .WithSummary("Approve the newest version, a draft made by someone else; earlier approved versions become superseded")
            .WithDescription("403 when the approver made the version (two people: one makes, another approves); 409 when the version is not the newest draft.")
            .Accepts<ApprovalRequest>("application/json")
            .Produces<BudgetVersionDto>(StatusCodes.Status200OK)
            .ProducesProblem(StatusCodes.Status404NotFound).ProducesProblem(StatusCodes.Status409Conflict);
        return routes;
    }

    /// <summary>GET /api/v1/templates.</summary>
    public static Ok<TemplateDto[]> Templates(TemplateCatalog catalog)
    {
        ArgumentNullException.ThrowIfNull(catalog);
        return TypedResults.Ok(catalog.All.Select(t => new TemplateDto(t.Id, t.Version, t.Title, t.AppliesTo, t.CoverageProbability,
            t.Contributions.Select(c => new TemplateLineDto(c.Name, ModelName(c.Model), TemplateCatalog.Describe(c), StageName(c.Stage))).ToArray(), t.HoldDays)).ToArray());
    }

    /// <summary>GET /api/v1/budgets.</summary>
    public static async Task<Results<Ok<Page<BudgetDto>>, ProblemHttpResult>> List(BudgetStore store, IOptions<JsonOptions> json, int? limit, string? cursor, long? runId,
        long? instrumentId, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(store);
        var errors = new FieldErrors();
        var (take, after) = Conventions.PageRequest(limit, cursor, errors);
        if (!errors.IsEmpty)
        {
            return Problems.Invalid(errors.ToDictionary());
        }

        var rows = await store.ListAsync(after, take + 1, runId, instrumentId, ct);
        var page = rows.Take(take).ToArray();
        var latest = await store.LatestVersionsAsync(page, ct);
        var items = page.Select(b => ToDto(b, latest[b.Id], json)).ToList();

        return TypedResults.Ok(new Page<BudgetDto>(items, rows.Count > take ? Conventions.Cursor(items[^1].Id) : null));
    }

    /// <summary>GET /api/v1/budgets/{id}.</summary>
    public static async Task<Results<Ok<BudgetDto>, ProblemHttpResult>> Get(long id, BudgetStore store, IOptions<JsonOptions> json, HttpResponse response, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(store);
        ArgumentNullException.ThrowIfNull(response);
        if (await store.GetAsync(id, ct) is not { } budget)
        {
            return NotFound(id);
        }

        response.Headers.ETag = Conventions.ETag(budget.LatestVersion);
        return TypedResults.Ok(ToDto(budget, (await store.VersionAsync(id, budget.LatestVersion, ct))!, json));
    }

    /// <summary>GET /api/v1/budgets/{id}/versions.</summary>
    public static async Task<Results<Ok<BudgetVersionSummaryDto[]>, ProblemHttpResult>> Versions(long id, BudgetStore store, IOptions<JsonOptions> json, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(store);
        var versions = await store.VersionsAsync(id, ct);
        return versions.Count == 0 ? NotFound(id) : TypedResults.Ok(versions.Select(v => new BudgetVersionSummaryDto(v.Number, v.State, v.Reason, v.MadeAt, v.MadeBy,
            v.ApprovedBy, Stages(v, json)?.Calibration.ExpandedUncertainty ?? Result(v, json).ExpandedUncertainty)).ToArray());
    }

    /// <summary>GET /api/v1/budgets/{id}/versions/{number}.</summary>
    public static async Task<Results<Ok<BudgetVersionDto>, ProblemHttpResult>> Version(long id, int number, BudgetStore store, IOptions<JsonOptions> json, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(store);
        var budget = await store.GetAsync(id, ct);
        var version = budget is null ? null : await store.VersionAsync(id, number, ct);
        return version is null
            ? Problems.Status(StatusCodes.Status404NotFound, "No such budget version.", $"Budget {id} has no version {number}.")
            : TypedResults.Ok(ToVersionDto(budget!, version, json));
    }

    /// <summary>GET /api/v1/budgets/{id}/diff.</summary>
    public static async Task<Results<Ok<BudgetDiffDto>, ProblemHttpResult>> Diff(long id, int? from, int? to, BudgetStore store, IOptions<JsonOptions> json, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(store);
        if (from is null || to is null)
        {
            return Problems.Invalid(new Dictionary<string, string[]> { [from is null ? "from" : "to"] = ["Required: a version number."] });
        }

        var a = await store.VersionAsync(id, from.Value, ct);
        var b = await store.VersionAsync(id, to.Value, ct);
        if (a is null || b is null)
        {
            return Problems.Status(StatusCodes.Status404NotFound, "No such budget version.", $"Budget {id} has no version {(a is null ? from : to)}.");
        }

        var (ra, rb) = (Result(a, json), Result(b, json));
        var (sa, sb) = (Stages(a, json), Stages(b, json));
        var (la, lb) = (Lines(a, json).ToDictionary(l => l.Name), Lines(b, json).ToDictionary(l => l.Name));
        var ua = ra.Contributions.ToDictionary(c => c.Name, c => c.StandardUncertainty);
        var ub = rb.Contributions.ToDictionary(c => c.Name, c => c.StandardUncertainty);
        var names = la.Keys.Concat(lb.Keys.Where(k => !la.ContainsKey(k))).ToArray();
        var rows = names.Select(n =>
        {
            la.TryGetValue(n, out var x);
            lb.TryGetValue(n, out var y);
            double? u1 = ua.TryGetValue(n, out double p) ? p : null;
            double? u2 = ub.TryGetValue(n, out double q) ? q : null;
            // an in-use line's u is that of the prediction's evaluation
            u1 ??= x?.Stage == "in-use" ? sa?.Prediction?.Result.Contributions.FirstOrDefault(c => c.Name == n)?.StandardUncertainty : null;
            u2 ??= y?.Stage == "in-use" ? sb?.Prediction?.Result.Contributions.FirstOrDefault(c => c.Name == n)?.StandardUncertainty : null;
            string change = x is null ? "added" : y is null ? "removed"
                : u1 == u2 && (x.Input.Estimate ?? 0) == (y.Input.Estimate ?? 0) && x.Source == y.Source && x.Stage == y.Stage ? "same" : "changed";
            return new ContributionDiffDto(n, change, [u1, u2], [x?.Input.Estimate ?? (x is null ? null : 0), y?.Input.Estimate ?? (y is null ? null : 0)], [x?.Source, y?.Source],
                [x?.Stage, y?.Stage]);
        }).ToArray();
        return TypedResults.Ok(new BudgetDiffDto(a.Number, b.Number, rows, [ra.Estimate, rb.Estimate],
            [sa?.Calibration.ExpandedUncertainty ?? ra.ExpandedUncertainty, sb?.Calibration.ExpandedUncertainty ?? rb.ExpandedUncertainty],
            [sa?.Prediction?.Result.Estimate, sb?.Prediction?.Result.Estimate], [sa?.Prediction?.Result.ExpandedUncertainty, sb?.Prediction?.Result.ExpandedUncertainty]));
    }

    /// <summary>POST /api/v1/budgets.</summary>
    public static async Task<IResult> Create(BudgetBuildRequest request, HttpContext http, IDbConnectionFactory database, TimeProvider time, TemplateCatalog catalog,
        LabScope scope, ReadingStore readings, IOptions<JsonOptions> json, IOptions<CalBudgetOptions> options, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(request);
        ArgumentNullException.ThrowIfNull(http);
        ArgumentNullException.ThrowIfNull(time);
        ArgumentNullException.ThrowIfNull(catalog);
        var errors = new FieldErrors();
        if (request.RunId is null)
        {
            errors.Add("runId", "Required: the calibration run.");
        }

        string? templateId = errors.Text(request.TemplateId, "templateId", 100);
        var policy = ReadPolicy(request.PosturePolicy, errors);
        CheckOverrides(request.Overrides, errors);
        if (!errors.IsEmpty || templateId is null || policy is null)
        {
            return Problems.Invalid(errors.ToDictionary());
        }

        if (catalog.Find(templateId) is not { } template)
        {
            return Problems.NotComputable(new Dictionary<string, string[]> { ["templateId"] = [$"No template '{templateId}': the templates are {string.Join(", ", catalog.All.Select(t => t.Id))}."] });
        }

        var now = time.GetUtcNow();
        await using var work = await UnitOfWork.BeginAsync(database, ct);
        var built = await BuildAsync(work, null, request.RunId!.Value, template, scope, policy, request.PosturePolicy, request.Overrides ?? [], request.MonteCarlo, readings, json, options, ct);
        if (built.Problem is { } problem)
        {
            return problem;
        }

        long id = await BudgetStore.CreateAsync(work, request.RunId.Value, template.Id, Conventions.Actor(http.User), now);
        await BudgetStore.AddVersionAsync(work, id, 1, "first version", template.Version, built.UploadId, built.Snapshot!, built.Result!, EngineVersion, Conventions.Actor(http.User), Conventions.Person(http.User), now,
            built.Stages);
        var budget = (await BudgetStore.GetAsync(work, id))!;
        var dto = ToDto(budget, (await BudgetStore.VersionAsync(work, id, 1))!, json);
        await AuditTrail.RecordAsync(work, http, now, "create", "budget", $"{id}/1", null, dto.Latest);
        await work.CommitAsync(ct);
        http.Response.Headers.ETag = Conventions.ETag(1);
        return TypedResults.Created($"/api/v1/budgets/{id}", dto);
    }

    /// <summary>POST /api/v1/budgets/{id}/versions.</summary>
    public static async Task<IResult> Revise(long id, BudgetRevisionRequest request, HttpContext http, IDbConnectionFactory database, TimeProvider time,
        TemplateCatalog catalog, LabScope scope, ReadingStore readings, IOptions<JsonOptions> json, IOptions<CalBudgetOptions> options, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(request);
        ArgumentNullException.ThrowIfNull(http);
        ArgumentNullException.ThrowIfNull(time);
        ArgumentNullException.ThrowIfNull(catalog);
        var errors = new FieldErrors();
        string? reason = errors.Text(request.Reason, "reason", 1000);
        var policy = request.PosturePolicy is null ? null : ReadPolicy(request.PosturePolicy, errors);
        CheckOverrides(request.Overrides, errors);
        if (!errors.IsEmpty || reason is null)
        {
            return Problems.Invalid(errors.ToDictionary());
        }

        var now = time.GetUtcNow();
        await using var work = await UnitOfWork.BeginAsync(database, ct);
        if (await BudgetStore.GetAsync(work, id) is not { } budget)
        {
            return NotFound(id);
        }

        if (Conventions.CheckIfMatch(http.Request, budget.LatestVersion) is { } precondition)
        {
            return precondition;
        }

        var last = (await BudgetStore.VersionAsync(work, id, budget.LatestVersion))!;
        var previous = Snapshot(last, json);
        var template = catalog.Find(budget.TemplateId);
        if (template is null)
        {
            return Problems.NotComputable(new Dictionary<string, string[]> { ["templateId"] = [$"The template '{budget.TemplateId}' is no longer installed."] });
        }

        var policyDto = request.PosturePolicy ?? previous.PosturePolicy;
        policy ??= ReadPolicy(policyDto, errors)!;
        var built = await BuildAsync(work, id, budget.RunId, template, scope, policy, policyDto, request.Overrides ?? previous.Overrides, request.MonteCarlo ?? previous.MonteCarlo,
            readings, json, options, ct);
        if (built.Problem is { } problem)
        {
            return problem;
        }

        int number = budget.LatestVersion + 1;
        await BudgetStore.AddVersionAsync(work, id, number, reason, template.Version, built.UploadId, built.Snapshot!, built.Result!, EngineVersion, Conventions.Actor(http.User), Conventions.Person(http.User), now,
            built.Stages);
        var dto = ToDto((await BudgetStore.GetAsync(work, id))!, (await BudgetStore.VersionAsync(work, id, number))!, json);
        await AuditTrail.RecordAsync(work, http, now, "revise", "budget", $"{id}/{number}", reason, dto.Latest);
        await work.CommitAsync(ct);
        http.Response.Headers.ETag = Conventions.ETag(number);
        return TypedResults.Created($"/api/v1/budgets/{id}/versions/{number}", dto);
    }

    /// <summary>POST /api/v1/budgets/{id}/versions/{number}/approve.</summary>
    public static async Task<Results<Ok<BudgetVersionDto>, ProblemHttpResult>> Approve(long id, int number, ApprovalRequest? request, HttpContext http,
        IDbConnectionFactory database, TimeProvider time, IOptions<JsonOptions> json, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(http);
        ArgumentNullException.ThrowIfNull(time);
        var errors = new FieldErrors();
        string meaning = errors.Text(request?.Meaning, "meaning", 500, required: false) ?? DefaultMeaning;
        if (!errors.IsEmpty)
        {
            return Problems.Invalid(errors.ToDictionary());
        }

        if (!Conventions.IsNamedPerson(http.User))
        {
            return Conventions.Unnamed(http.User);
        }

        string actor = Conventions.Actor(http.User);
        var now = time.GetUtcNow();
        await using var work = await UnitOfWork.BeginAsync(database, ct);
        var budget = await BudgetStore.GetAsync(work, id);
        var version = budget is null ? null : await BudgetStore.VersionAsync(work, id, number);
        if (version is null)
        {
            return Problems.Status(StatusCodes.Status404NotFound, "No such budget version.", $"Budget {id} has no version {number}.");
        }

        if (version.State != BudgetStates.Draft)
        {
            return Problems.Status(StatusCodes.Status409Conflict, $"Version {number} is {version.State}.",
                "An approved version is fixed, and a superseded one stays as it was; a change starts a new draft version (POST .../versions).");
        }

        if (number != budget!.LatestVersion)
        {
            return Problems.Status(StatusCodes.Status409Conflict, $"Version {number} is not the newest.", $"Version {budget.LatestVersion} has replaced it; approve that one.");
        }

        if (version.MadeByPerson == Conventions.Person(http.User))
        {
            return Problems.Status(StatusCodes.Status403Forbidden, "You made this version.",
                $"Approval takes a second person: version {number} was made by '{version.MadeByPerson}' (key '{version.MadeBy}'), who cannot also approve it.");
        }

        await BudgetStore.ApproveAsync(work, id, number, actor, meaning, now);
        var dto = ToVersionDto(budget, (await BudgetStore.VersionAsync(work, id, number))!, json);
        await AuditTrail.RecordAsync(work, http, now, "approve", "budget", $"{id}/{number}", meaning, dto);
        await work.CommitAsync(ct);
        return TypedResults.Ok(dto);
    }

    /// <summary>Re-evaluates a stored version from its snapshot alone (what an auditor would do with POST /api/v1/budgets/evaluate).</summary>
    public static EvaluateResponse? Reevaluate(BudgetVersion version, IOptions<JsonOptions> json, long maxTrials)
    {
        ArgumentNullException.ThrowIfNull(version);
        return BudgetsApi.Compute(Snapshot(version, json).Evaluate, maxTrials).Response;
    }

    /// <summary>What a stored version holds: its lines with their sources, the evaluation request built from them, and the result.</summary>
    public static (IReadOnlyList<BudgetLineDto> Lines, EvaluateRequest Evaluate, EvaluateResponse Result) Contents(BudgetVersion version, IOptions<JsonOptions> json)
    {
        ArgumentNullException.ThrowIfNull(version);
        var snapshot = Snapshot(version, json);
        return (snapshot.Lines, snapshot.Evaluate, Result(version, json));
    }

    private sealed record Built(string? Snapshot, string? Result, long? UploadId, ProblemHttpResult? Problem, string? Stages = null);

    /// <summary>The stored snapshot: everything the version was built from.</summary>
    private sealed record BudgetSnapshot(string TemplateId, int TemplateVersion, JsonElement Run, JsonElement Reference, JsonElement Specification,
        JsonElement? Readings, JsonElement? SensitivityTest, PosturePolicyDto PosturePolicy, IReadOnlyList<OverrideDto> Overrides, MonteCarloRequest? MonteCarlo,
        IReadOnlyList<BudgetLineDto> Lines, EvaluateRequest Evaluate);

    private static async Task<Built> BuildAsync(UnitOfWork work, long? budgetId, long runId, BudgetTemplate template, LabScope scope, PosturePolicy policy, PosturePolicyDto? policyDto,
        IReadOnlyList<OverrideDto> overrides, MonteCarloRequest? monteCarlo, ReadingStore readings, IOptions<JsonOptions> json, IOptions<CalBudgetOptions> options, CancellationToken ct)
    {
        var o = json.Value.SerializerOptions;
        if (await CalibrationRunStore.GetAsync(work, runId) is not { } run)
        {
            return Refused("runId", $"No calibration run has the id {runId}.");
        }

        var instrument = (await InstrumentStore.GetAsync(work, run.Fields.InstrumentId))!;
        if (!template.AppliesTo.Contains(instrument.Fields.OscillatorKind))
        {
            return Refused("templateId", $"The template '{template.Id}' is for {string.Join(", ", template.AppliesTo)}; the instrument's timebase is {instrument.Fields.OscillatorKind}.");
        }

        var reference = (await ReferenceStandardStore.GetAsync(work, run.Fields.ReferenceId))!;
        var spec = JsonSerializer.Deserialize<TimebaseSpecificationDto>(instrument.Fields.SpecificationJson, o)!;
        var upload = await ReadingStore.LatestAsync(work, runId);
        double[] values = upload is null ? [] : await readings.FractionalOffsetsAsync(upload.Id, ct);

        var f = run.Fields;
        var runInputs = new RunInputs(f.StartedAt, f.GateTimeSeconds, f.ComparatorResolution, Core.Orientation.Posture.FromVector(new Core.Orientation.Vector3D(f.UpX, f.UpY, f.UpZ)),
            values, f.Environment.TemperatureVariationKelvin, f.WarmUpMinutes, f.ComparatorSystematic);
        var rf = reference.Fields;
        var refInputs = new ReferenceInputs(rf.Identity, rf.CertificateNumber, rf.CalibrationDate, rf.FractionalOffset, rf.ExpandedUncertainty, rf.CoverageFactor,
            rf.DriftPerDay, rf.DriftUncertaintyPerDay);
        var test = await SensitivityTestStore.LatestAsync(work, instrument.Id);
        double[,]? covariance = test?.Covariance is not null ? new double[3, 3] : null;
        for (int i = 0; covariance is not null && i < 3; i++)
        {
            for (int j = 0; j < 3; j++)
            {
                covariance[i, j] = test!.Covariance![i][j];
            }
        }

        var measured = test is null ? null : new MeasuredSensitivity(test.Id, new Core.Orientation.Vector3D(test.Gamma[0], test.Gamma[1], test.Gamma[2]), covariance, test.TestedAt,
            test.DegreesOfFreedom);
        var specInputs = new SpecificationInputs(spec.TemperatureCoefficientPerKelvin, spec.AgingPerDay, spec.AgingPerYear, spec.AccelerationSensitivityPerG, spec.Retrace, measured,
            spec.WarmUpMinutes);
        var use = new UseConditions(template.HoldDays, policy);
        var lines = new List<BudgetLineDto>();
        foreach (var x in overrides.Where(x => template.Contributions.All(c => c.Name != x.Name)))
        {
            return Refused($"overrides.{x.Name}", $"The template has no contribution named '{x.Name}'.");
        }

        string? AddLines(BudgetStage stage, out string message)
        {
            message = "";
            foreach (var c in template.Contributions.Where(c => c.Stage == stage))
            {
                var replaced = overrides.FirstOrDefault(x => x.Name == c.Name);
                if (replaced is not null)
                {
                    lines.Add(new BudgetLineDto(c.Name, "override", $"override ({replaced.Reason}); the template's {ModelName(c.Model)} model is not used",
                        new ContributionRequest(c.Name, replaced.Estimate, null, replaced.Distribution, replaced.StandardUncertainty, replaced.ExpandedUncertainty,
                            replaced.CoverageFactor, replaced.HalfWidth, replaced.DegreesOfFreedom, replaced.Type), StageName(c.Stage)));
                    continue;
                }

                try
                {
                    if (TimebaseBudget.Build(c, runInputs, refInputs, specInputs, use) is { } line)
                    {
                        lines.Add(new BudgetLineDto(line.Name, ModelName(line.Model), line.Source, ToRequest(line), StageName(line.Stage)));
                    }
                }
                catch (MetrologyException ex)
                {
                    message = ex.Message;
                    return ex.Parameter.StartsWith("posturePolicy", StringComparison.Ordinal) || ex.Parameter.StartsWith("run.", StringComparison.Ordinal)
                        ? ex.Parameter : $"contributions.{c.Name}";
                }
            }

            return null;
        }

        if (AddLines(BudgetStage.Calibration, out string calibrationRefusal) is { } calibrationField)
        {
            return Refused(calibrationField, calibrationRefusal);
        }

        // the calibration result, evaluated once: it is stored, and the aging of the in-use prediction is fitted with it as
        // the newest point. A Monte Carlo request without a seed gets one now, kept in the snapshot, so that the version can
        // be re-evaluated to the last digit.
        var mc = monteCarlo is null ? null : monteCarlo with { Seed = monteCarlo.Seed ?? BitConverter.ToUInt64(System.Security.Cryptography.RandomNumberGenerator.GetBytes(8)) };
        var calibrationLines = lines.ToList();
        var evaluate = new EvaluateRequest($"fractional frequency offset of the timebase of {instrument.Fields.AssetNumber}", template.CoverageProbability,
            calibrationLines.Select(l => l.Input).ToArray(), null, mc);
        var (result, problem) = BudgetsApi.Compute(evaluate, options.Value.MonteCarloMaxTrials, ct);
        if (problem is not null)
        {
            return new Built(null, null, null, problem);
        }

        if (template.Contributions.Any(c => c.Stage == BudgetStage.InUse))
        {
            // an as-left run follows an adjustment: the drift starts again from it
            var history = await InstrumentHistory.CertificatesAsync(work, instrument.Id, f.StartedAt, budgetId, o);
            history.Add(new HistoryPoint(f.StartedAt, result!.Estimate, result.ExpandedUncertainty, result.CoverageFactor, f.Condition == "as-left"));
            specInputs = specInputs with { AgingFit = InstrumentHistory.ForBudget(InstrumentHistory.SinceLastAdjustment(history)) };
            if (AddLines(BudgetStage.InUse, out string inUseRefusal) is { } inUseField)
            {
                return Refused(inUseField, inUseRefusal);
            }
        }

        PredictionDto? prediction = null;
        if (lines.Count > calibrationLines.Count)
        {
            var predict = new EvaluateRequest($"fractional frequency offset of the timebase of {instrument.Fields.AssetNumber} predicted to the end of {template.HoldDays:G6} days of use",
                template.CoverageProbability, lines.Select(l => l.Input).ToArray(), null, mc);
            var (predicted, predictProblem) = BudgetsApi.Compute(predict, options.Value.MonteCarloMaxTrials, ct);
            if (predictProblem is not null)
            {
                return new Built(null, null, null, predictProblem);
            }

            var until = f.StartedAt.UtcDateTime.Date.AddDays(Math.Ceiling(template.HoldDays));
            var assumptions = PredictionWording.Assumptions(template, lines, policy, f, spec, specInputs.AgingFit, new DateTimeOffset(until, TimeSpan.Zero),
                instrument.Fields.Postures);
            prediction = new PredictionDto(template.HoldDays, new DateTimeOffset(until, TimeSpan.Zero), assumptions, PredictionWording.Statement(predicted!, assumptions),
                lines.Where(l => l.Stage == "in-use").Select(l => l.Name).ToArray(), predict, predicted!);
        }

        var stated = StateCalibrationResult(result!, scope, instrument.Fields.OscillatorKind, instrument.Fields.NominalFrequencyHz);
        var snapshot = new BudgetSnapshot(template.Id, template.Version,
            JsonSerializer.SerializeToElement(Calibrations.CalibrationsApi.ToDto(run), o),
            JsonSerializer.SerializeToElement(new { rf.Identity, rf.CertificateNumber, rf.IssuingLab, rf.CalibrationDate, rf.FractionalOffset, rf.ExpandedUncertainty,
                rf.CoverageFactor, rf.DriftPerDay, rf.DriftUncertaintyPerDay, rf.DueDate }, o),
            JsonSerializer.SerializeToElement(spec, o),
            upload is null ? null : JsonSerializer.SerializeToElement(new { uploadId = upload.Id, upload.Sha256, upload.Count, upload.Quantity }, o),
            test is null ? null : JsonSerializer.SerializeToElement(test, o),
            policyDto ?? new PosturePolicyDto("as-calibrated", null, null), overrides, mc, lines, evaluate);
        return new Built(JsonSerializer.Serialize(snapshot, o), JsonSerializer.Serialize(result, o), upload?.Id, null,
            JsonSerializer.Serialize(new BudgetStagesDto(stated, prediction), o));
    }

    /// <summary>
    /// The calibration result as stated: U never below the CMC that covers the result (ILAC-P14), k as the budget's, u = U / k;
    /// the Monte Carlo interval governs when the budget's Monte Carlo run did not validate the GUM result (JCGM 101 clause 8).
    /// </summary>
    public static CalibrationResultDto StateCalibrationResult(EvaluateResponse result, LabScope scope, string kind, double nominalHz)
    {
        ArgumentNullException.ThrowIfNull(result);
        ArgumentNullException.ThrowIfNull(scope);
        var cmc = scope.Covering(kind, nominalHz, result.Estimate);
        double u = result.ExpandedUncertainty;
        bool raised = cmc is not null && cmc.ExpandedUncertainty > u;
        double stated = raised ? cmc!.ExpandedUncertainty : u;
        bool monteCarlo = result.MonteCarlo is { GumValidated: false };
        double[] interval = monteCarlo && !raised ? [.. result.MonteCarlo!.CoverageInterval] : [result.Estimate - stated, result.Estimate + stated];
        string words = cmc is null
            ? $"No capability of the laboratory's scope ({scope.Title}) covers a {kind} timebase at {nominalHz:G6} Hz with this offset: the result is outside the scope."
            : cmc.Words + (raised ? " The budget's U is below this CMC, so the CMC is stated." : "");
        return new CalibrationResultDto(result.Estimate, stated / result.CoverageFactor, stated, result.CoverageFactor, result.CoverageProbability,
            result.EffectiveDegreesOfFreedom, u, cmc is not null, words, cmc?.ExpandedUncertainty, raised, raised ? "CMC" : monteCarlo ? "Monte Carlo" : "GUM", interval);
    }

    private static Built Refused(string field, string message) =>
        new(null, null, null, Problems.NotComputable(new Dictionary<string, string[]> { [field] = [message] }));

    private static ContributionRequest ToRequest(BudgetLine l) => new(l.Name, l.Estimate, 1,
        l.Distribution switch
        {
            DistributionKind.Normal => "normal",
            DistributionKind.Rectangular => "rectangular",
            DistributionKind.Triangular => "triangular",
            DistributionKind.UShaped => "u-shaped",
            DistributionKind.StudentT => "student-t",
            _ => "normal",
        },
        l.StandardUncertainty, null, null, l.HalfWidth, double.IsPositiveInfinity(l.DegreesOfFreedom) ? null : l.DegreesOfFreedom, l.Type.ToString());

    private static PosturePolicy? ReadPolicy(PosturePolicyDto? p, FieldErrors errors)
    {
        if (p is null)
        {
            return new PosturePolicy("as-calibrated");
        }

        switch (p.Kind)
        {
            case "as-calibrated" or "any":
                return new PosturePolicy(p.Kind);
            case "known":
                return OrientationApi.ReadPosture(p.UseUp, "posturePolicy.useUp", errors) is { } use ? new PosturePolicy("known", use.Up) : null;
            case "tilt-limit" when p.TiltLimitDegrees is double t && double.IsFinite(t) && t is >= 0 and <= 180:
                return new PosturePolicy("tilt-limit", TiltLimitDegrees: t);
            case "tilt-limit":
                errors.Add("posturePolicy.tiltLimitDegrees", "Required for a tilt limit: 0 to 180 degrees.");
                return null;
            default:
                errors.Add("posturePolicy.kind", $"One of {string.Join(", ", PosturePolicy.Kinds)}.");
                return null;
        }
    }

    private static void CheckOverrides(IReadOnlyList<OverrideDto>? overrides, FieldErrors errors)
    {
        var names = new HashSet<string>(StringComparer.Ordinal);
        for (int i = 0; i < (overrides?.Count ?? 0); i++)
        {
            var x = overrides![i];
            if (errors.Text(x?.Name, $"overrides[{i}].name", 200) is { } name && !names.Add(name))
            {
                errors.Add($"overrides[{i}].name", $"'{name}' is overridden twice.");
            }

            errors.Text(x?.Reason, $"overrides[{i}].reason", 1000);
            if (x?.Distribution is null)
            {
                errors.Add($"overrides[{i}].distribution", "Required: the stated distribution.");
            }
        }
    }

    private static string ModelName(ContributionModel model) => TemplateCatalog.ModelNames.First(m => m.Value == model).Key;

    private static string StageName(BudgetStage stage) => TemplateCatalog.StageNames.First(m => m.Value == stage).Key;

    /// <summary>The version's two results as stored, or null for a version made before they were kept apart.</summary>
    public static BudgetStagesDto? Stages(BudgetVersion v, IOptions<JsonOptions> json)
    {
        ArgumentNullException.ThrowIfNull(v);
        ArgumentNullException.ThrowIfNull(json);
        return v.Stages is null ? null : JsonSerializer.Deserialize<BudgetStagesDto>(v.Stages, json.Value.SerializerOptions);
    }

    private static ProblemHttpResult NotFound(long id) => Problems.Status(StatusCodes.Status404NotFound, "No such budget.", $"No budget has the id {id}.");

    private static BudgetSnapshot Snapshot(BudgetVersion v, IOptions<JsonOptions> json) => JsonSerializer.Deserialize<BudgetSnapshot>(v.Snapshot, json.Value.SerializerOptions)!;

    private static EvaluateResponse Result(BudgetVersion v, IOptions<JsonOptions> json) => JsonSerializer.Deserialize<EvaluateResponse>(v.Result, json.Value.SerializerOptions)!;

    private static IReadOnlyList<BudgetLineDto> Lines(BudgetVersion v, IOptions<JsonOptions> json) => Snapshot(v, json).Lines;

    private static BudgetDto ToDto(Budget b, BudgetVersion latest, IOptions<JsonOptions> json) =>
        new(b.Id, b.RunId, b.TemplateId, b.CreatedAt, b.CreatedBy, b.LatestVersion, ToVersionDto(b, latest, json));

    private static BudgetVersionDto ToVersionDto(Budget b, BudgetVersion v, IOptions<JsonOptions> json) => ToVersionDto(b, v, json, Stages(v, json));

    private static BudgetVersionDto ToVersionDto(Budget b, BudgetVersion v, IOptions<JsonOptions> json, BudgetStagesDto? stages) =>
        new(v.BudgetId, v.Number, v.State, v.Reason, b.TemplateId, v.TemplateVersion, v.EngineVersion, v.MadeAt, v.MadeBy, v.ApprovedAt, v.ApprovedBy,
            v.SignatureMeaning, v.SupersededAt, Lines(v, json), Result(v, json), JsonDocument.Parse(v.Snapshot).RootElement.Clone(), stages?.Calibration,
            stages?.Prediction);
}
