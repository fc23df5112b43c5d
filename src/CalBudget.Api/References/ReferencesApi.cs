using CalBudget.Api.Auth;
using CalBudget.Api.Hosting;
using CalBudget.Data;
using CalBudget.Data.References;
using Microsoft.AspNetCore.Http.HttpResults;
using Microsoft.AspNetCore.Http.Json;
using FromHeaderAttribute = Microsoft.AspNetCore.Mvc.FromHeaderAttribute;
using Microsoft.Extensions.Options;

namespace CalBudget.Api.References;

/// <summary>The laboratory's reference standards under <c>/api/v1/references</c>.</summary>
public static class ReferencesApi
{
    /// <summary>A reference is "due soon" within this many days of its due date.</summary>
    public const int DueSoonDays = 30;

    private const string CreateOperation = "references.create";
    private const string Noun = "reference standard";
    private const string Entity = "reference";

    /// <summary>Maps the routes.</summary>
    public static IEndpointRouteBuilder MapReferencesApi(this IEndpointRouteBuilder routes)
    {
        var read = routes.MapGroup("/api/v1/references").WithTags("References").RequireAuthorization(Policies.AnyRole);
        read.MapGet("/", List).WithName("ListReferences").WithSummary("List reference standards, in id order, a page at a time")
            .WithDescription("Filters: kind, text (in identity, description or certificate number), includeRetired. limit 1 to 200 (default 50); the answer's nextCursor is passed back as cursor.")
            .ProducesValidationProblem(StatusCodes.Status400BadRequest);
        read.MapGet("/{id:long}", Get).WithName("GetReference").WithSummary("Read a reference standard (ETag: its version)")
            .ProducesProblem(StatusCodes.Status404NotFound);

        var write = routes.MapGroup("/api/v1/references").WithTags("References").RequireAuthorization(Policies.Writer);
        write.MapPost("/", Create).WithName("CreateReference").WithSummary("Record a reference standard")
            .WithDescription("Idempotency-Key (optional, per key holder): a replay with the same body returns the first answer; with another body, 422.")
            .Accepts<ReferenceStandardRequest>("application/json")
            .Produces<ReferenceStandardDto>(StatusCodes.Status201Created)
            .ProducesValidationProblem(StatusCodes.Status400BadRequest).ProducesProblem(StatusCodes.Status409Conflict)
            .ProducesValidationProblem(StatusCodes.Status422UnprocessableEntity);
        write.MapPut("/{id:long}", Update).WithName("UpdateReference").WithSummary("Replace a reference standard's record (If-Match required)")
            .WithDescription("If-Match: the ETag read; without it 428, with an older one 412. A retired reference cannot be edited (409).")
            .Accepts<ReferenceStandardRequest>("application/json")
            .ProducesChangeRefusals();

        var admin = routes.MapGroup("/api/v1/references").WithTags("References").RequireAuthorization(Policies.Admin);
        admin.MapPost("/{id:long}/retire", Retire).WithName("RetireReference").WithSummary("Retire a reference standard (If-Match required); it stays on record")
            .Accepts<RetireRequest>("application/json")
            .ProducesChangeRefusals();
        return routes;
    }

    /// <summary>GET /api/v1/references.</summary>
    public static async Task<Results<Ok<Page<ReferenceStandardDto>>, ProblemHttpResult>> List(ReferenceStandardStore store, TimeProvider time,
        int? limit, string? cursor, string? kind, string? text, bool? includeRetired, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(store);
        ArgumentNullException.ThrowIfNull(time);
        var errors = new FieldErrors();
        var (take, after) = Conventions.PageRequest(limit, cursor, errors);
        if (kind is not null && !ReferenceKinds.All.Contains(kind))
        {
            errors.Add("kind", $"One of {string.Join(", ", ReferenceKinds.All)}.");
        }

        if (!errors.IsEmpty)
        {
            return Problems.Invalid(errors.ToDictionary());
        }

        var rows = await store.ListAsync(after, take + 1, kind, string.IsNullOrWhiteSpace(text) ? null : text.Trim(), includeRetired ?? false, ct);
        var now = time.GetUtcNow();
        return TypedResults.Ok(Conventions.Page(rows, take, r => ToDto(r, now), r => r.Id));
    }

    /// <summary>GET /api/v1/references/{id}.</summary>
    public static async Task<Results<Ok<ReferenceStandardDto>, ProblemHttpResult>> Get(long id, ReferenceStandardStore store, TimeProvider time, HttpResponse response, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(store);
        ArgumentNullException.ThrowIfNull(time);
        ArgumentNullException.ThrowIfNull(response);
        var r = await store.GetAsync(id, ct);
        if (r is null)
        {
            return NotFound(id);
        }

        response.Headers.ETag = Conventions.ETag(r.Version);
        return TypedResults.Ok(ToDto(r, time.GetUtcNow()));
    }

    /// <summary>POST /api/v1/references.</summary>
    public static async Task<IResult> Create(
        ReferenceStandardRequest request, HttpContext http, IDbConnectionFactory database, TimeProvider time, IOptions<JsonOptions> json,
        [FromHeader(Name = Conventions.IdempotencyKeyHeader)] string? idempotencyKey, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(http);
        ArgumentNullException.ThrowIfNull(time);
        ArgumentNullException.ThrowIfNull(json);
        var errors = new FieldErrors();
        var fields = Map(request, errors);
        IdempotentCreate.CheckKey(idempotencyKey, errors);

        if (fields is null || !errors.IsEmpty)
        {
            return Problems.Invalid(errors.ToDictionary());
        }

        string actor = Conventions.Actor(http.User);
        var now = time.GetUtcNow();
        byte[] hash = Conventions.RequestHash(request, json);
        await using var work = await UnitOfWork.BeginAsync(database, ct);
        if (await IdempotentCreate.ReplayAsync(work, http, idempotencyKey, CreateOperation, hash) is { } replay)
        {
            return replay;
        }

        if (await ReferenceStandardStore.IdentityTakenAsync(work, fields.Identity))
        {
            return Problems.Status(StatusCodes.Status409Conflict, "The identity is taken.", $"A reference standard named '{fields.Identity}' is on record already.");
        }

        var created = await ReferenceStandardStore.CreateAsync(work, fields, actor, now);
        var dto = ToDto(created, now);
        string location = $"/api/v1/references/{created.Id}";
        await IdempotentCreate.RecordAsync(work, http, idempotencyKey, CreateOperation, hash, location, dto, json, now);
        await AuditTrail.RecordAsync(work, http, now, "create", Entity, created.Id, null, dto);

        await work.CommitAsync(ct);
        http.Response.Headers.ETag = Conventions.ETag(created.Version);
        return TypedResults.Created(location, dto);
    }

    /// <summary>PUT /api/v1/references/{id}.</summary>
    public static async Task<Results<Ok<ReferenceStandardDto>, ProblemHttpResult>> Update(long id, ReferenceStandardRequest request, HttpContext http,
        IDbConnectionFactory database, TimeProvider time, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(http);
        ArgumentNullException.ThrowIfNull(time);
        var errors = new FieldErrors();
        var fields = Map(request, errors);
        if (fields is null || !errors.IsEmpty)
        {
            return Problems.Invalid(errors.ToDictionary());
        }

        await using var work = await UnitOfWork.BeginAsync(database, ct);
        var current = await ReferenceStandardStore.GetAsync(work, id);
        if (ChangeCheck.Refusal(current, http.Request, Noun, id) is { } refused)
        {
            return refused;
        }

        if (await ReferenceStandardStore.IdentityTakenAsync(work, fields.Identity, id))
        {
            return Problems.Status(StatusCodes.Status409Conflict, "The identity is taken.", $"Another reference standard is named '{fields.Identity}'.");
        }

        var now = time.GetUtcNow();
        await ReferenceStandardStore.UpdateAsync(work, id, current!.Version, fields, Conventions.Actor(http.User), now);
        var updated = (await ReferenceStandardStore.GetAsync(work, id))!;
        var dto = ToDto(updated, now);
        await AuditTrail.RecordAsync(work, http, now, "update", Entity, id, null, dto);
        await work.CommitAsync(ct);
        http.Response.Headers.ETag = Conventions.ETag(updated.Version);
        return TypedResults.Ok(dto);
    }

    /// <summary>POST /api/v1/references/{id}/retire.</summary>
    public static Task<Results<Ok<ReferenceStandardDto>, ProblemHttpResult>> Retire(long id, RetireRequest request, HttpContext http,
        IDbConnectionFactory database, TimeProvider time, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(request);
        return ChangeCheck.RetireAsync(id, request.Reason, http, database, time, Noun, Entity, ReferenceStandardStore.GetAsync, ReferenceStandardStore.RetireAsync, ToDto, ct);
    }

    private static ProblemHttpResult NotFound(long id) =>
        Problems.Status(StatusCodes.Status404NotFound, "No such reference standard.", $"No reference standard has the id {id}.");

    private static ReferenceStandardFields? Map(ReferenceStandardRequest? r, FieldErrors errors)
    {
        if (r is null)
        {
            errors.Add("body", "Required.");
            return null;
        }

        string? identity = errors.Text(r.Identity, "identity", 100);
        if (r.Kind is null || !ReferenceKinds.All.Contains(r.Kind))
        {
            errors.Add("kind", $"Required: one of {string.Join(", ", ReferenceKinds.All)}.");
        }

        string description = errors.Text(r.Description, "description", 1000, required: false) ?? "";
        if (r.NominalFrequencyHz is null)
        {
            errors.Add("nominalFrequencyHz", "Required, in Hz.");
        }

        double? nominal = errors.Positive(r.NominalFrequencyHz, "nominalFrequencyHz");
        if (r.DueDate is null)
        {
            errors.Add("dueDate", "Required (RFC 3339).");
        }

        var c = r.Calibration;
        if (c is null)
        {
            errors.Add("calibration", "Required: the reference's own calibration.");
            return null;
        }

        string? certificate = errors.Text(c.CertificateNumber, "calibration.certificateNumber", 100);
        string? lab = errors.Text(c.IssuingLab, "calibration.issuingLab", 200);
        if (c.Date is null)
        {
            errors.Add("calibration.date", "Required (RFC 3339).");
        }

        foreach (var (value, name) in new[] { (c.FractionalOffset, "fractionalOffset"), (c.ExpandedUncertainty, "expandedUncertainty"), (c.CoverageFactor, "coverageFactor") })
        {
            if (value is null)
            {
                errors.Add($"calibration.{name}", "Required.");
            }
        }

        double? offset = errors.Finite(c.FractionalOffset, "calibration.fractionalOffset");
        double? expanded = errors.NonNegative(c.ExpandedUncertainty, "calibration.expandedUncertainty");
        double? k = errors.Positive(c.CoverageFactor, "calibration.coverageFactor");
        double drift = errors.Finite(c.DriftPerDay, "calibration.driftPerDay") ?? 0;
        double driftU = errors.NonNegative(c.DriftUncertaintyPerDay, "calibration.driftUncertaintyPerDay") ?? 0;
        if (c.Date is { } date && r.DueDate is { } due && due <= date)
        {
            errors.Add("dueDate", "The due date comes after the calibration date.");
        }

        if (!errors.IsEmpty || identity is null || nominal is null || certificate is null || lab is null || offset is null || expanded is null || k is null)
        {
            return null;
        }

        return new ReferenceStandardFields(identity, r.Kind!, description, nominal.Value, certificate, lab, c.Date!.Value.ToUniversalTime(),
            offset.Value, expanded.Value, k.Value, drift, driftU, r.DueDate!.Value.ToUniversalTime());
    }

    private static ReferenceStandardDto ToDto(ReferenceStandard r, DateTimeOffset now)
    {
        var f = r.Fields;
        string status = r.RetiredAt is not null ? "retired"
            : now > f.DueDate ? "overdue"
            : now > f.DueDate.AddDays(-DueSoonDays) ? "due soon"
            : "in calibration";
        return new ReferenceStandardDto(r.Id, f.Identity, f.Kind, f.Description, f.NominalFrequencyHz,
            new ReferenceCalibrationDto(f.CertificateNumber, f.IssuingLab, f.CalibrationDate, f.FractionalOffset, f.ExpandedUncertainty, f.CoverageFactor,
                f.DriftPerDay, f.DriftUncertaintyPerDay),
            f.DueDate, status, r.UsableAt(now).Usable, r.RetiredAt, r.RetiredReason, r.Version, r.CreatedAt, r.CreatedBy, r.UpdatedAt, r.UpdatedBy);
    }
}
