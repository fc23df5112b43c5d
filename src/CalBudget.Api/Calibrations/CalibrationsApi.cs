using System.Text.Json;
using CalBudget.Api.Analytics;
using CalBudget.Api.Auth;
using CalBudget.Api.Hosting;
using CalBudget.Api.References;
using CalBudget.Data;
using CalBudget.Data.Calibrations;
using CalBudget.Data.Instruments;
using CalBudget.Data.References;
using Microsoft.AspNetCore.Http.HttpResults;
using Microsoft.AspNetCore.Http.Json;
using Microsoft.Extensions.Options;
using FromHeaderAttribute = Microsoft.AspNetCore.Mvc.FromHeaderAttribute;

namespace CalBudget.Api.Calibrations;

/// <summary>Calibration runs under <c>/api/v1/calibrations</c>; their readings are <see cref="ReadingsApi"/>'s.</summary>
public static class CalibrationsApi
{
    private const string CreateOperation = "calibrations.create";
    private const string Noun = "calibration run";
    private const string Entity = "calibration";

    /// <summary>Maps the routes.</summary>
    public static IEndpointRouteBuilder MapCalibrationsApi(this IEndpointRouteBuilder routes)
    {
        var read = routes.MapGroup("/api/v1/calibrations").WithTags("Calibrations").RequireAuthorization(Policies.AnyRole);
        read.MapGet("/", List).WithName("ListCalibrations").WithSummary("List calibration runs, in id order, a page at a time")
            .WithDescription("Filters: instrumentId, referenceId, condition (as-found, as-left), includeRetired. limit 1 to 200 (default 50); nextCursor is passed back as cursor.")
            .ProducesValidationProblem(StatusCodes.Status400BadRequest);
        read.MapGet("/{id:long}", Get).WithName("GetCalibration").WithSummary("Read a calibration run (ETag: its version)")
            .ProducesProblem(StatusCodes.Status404NotFound);

        var write = routes.MapGroup("/api/v1/calibrations").WithTags("Calibrations").RequireAuthorization(Policies.Writer);
        write.MapPost("/", Create).WithName("CreateCalibration").WithSummary("Record a calibration run; the operator is the caller")
            .WithDescription("The instrument must be active and the reference standard usable: past its due date or retired, 409 naming referenceId. "
                + "The posture is one of the instrument's named postures or an explicit up vector in its body frame. "
                + "Idempotency-Key (optional): a replay with the same body returns the first answer; with another body, 422.")
            .Accepts<CalibrationRunRequest>("application/json")
            .Produces<CalibrationRunDto>(StatusCodes.Status201Created)
            .ProducesValidationProblem(StatusCodes.Status400BadRequest).ProducesValidationProblem(StatusCodes.Status409Conflict)
            .ProducesValidationProblem(StatusCodes.Status422UnprocessableEntity);
        write.MapPut("/{id:long}", Update).WithName("UpdateCalibration").WithSummary("Replace a run's record (If-Match required)")
            .WithDescription("A changed reference must be usable now (409). The instrument cannot change once readings are uploaded (409). The operator stays who made the run.")
            .Accepts<CalibrationRunRequest>("application/json")
            .ProducesChangeRefusals().ProducesValidationProblem(StatusCodes.Status422UnprocessableEntity);

        routes.MapGroup("/api/v1/calibrations").WithTags("Calibrations").RequireAuthorization(Policies.Admin)
            .MapPost("/{id:long}/retire", Retire).WithName("RetireCalibration").WithSummary("Retire a run (If-Match required); it and its readings stay on record")
            .Accepts<RetireRequest>("application/json")
            .ProducesChangeRefusals();
        return routes;
    }

    /// <summary>GET /api/v1/calibrations.</summary>
    public static async Task<Results<Ok<Page<CalibrationRunDto>>, ProblemHttpResult>> List(CalibrationRunStore store, int? limit, string? cursor,
        long? instrumentId, long? referenceId, string? condition, bool? includeRetired, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(store);
        var errors = new FieldErrors();
        var (take, after) = Conventions.PageRequest(limit, cursor, errors);
        if (condition is not null && !RunConditions.All.Contains(condition))
        {
            errors.Add("condition", $"One of {string.Join(", ", RunConditions.All)}.");
        }

        if (!errors.IsEmpty)
        {
            return Problems.Invalid(errors.ToDictionary());
        }

        var rows = await store.ListAsync(after, take + 1, instrumentId, referenceId, condition, includeRetired ?? false, ct);
        return TypedResults.Ok(Conventions.Page(rows, take, ToDto, r => r.Id));
    }

    /// <summary>GET /api/v1/calibrations/{id}.</summary>
    public static async Task<Results<Ok<CalibrationRunDto>, ProblemHttpResult>> Get(long id, CalibrationRunStore store, HttpResponse response, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(store);
        ArgumentNullException.ThrowIfNull(response);
        var run = await store.GetAsync(id, ct);
        if (run is null)
        {
            return NotFound(id);
        }

        response.Headers.ETag = Conventions.ETag(run.Version);
        return TypedResults.Ok(ToDto(run));
    }

    /// <summary>POST /api/v1/calibrations.</summary>
    public static async Task<IResult> Create(CalibrationRunRequest request, HttpContext http, IDbConnectionFactory database, TimeProvider time,
        IOptions<JsonOptions> json, [FromHeader(Name = Conventions.IdempotencyKeyHeader)] string? idempotencyKey, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(http);
        ArgumentNullException.ThrowIfNull(time);
        var errors = new FieldErrors();
        var draft = Read(request, errors);
        IdempotentCreate.CheckKey(idempotencyKey, errors);
        if (draft is null || !errors.IsEmpty)
        {
            return Problems.Invalid(errors.ToDictionary());
        }

        byte[] hash = Conventions.RequestHash(request, json);
        var now = time.GetUtcNow();
        await using var work = await UnitOfWork.BeginAsync(database, ct);
        if (await IdempotentCreate.ReplayAsync(work, http, idempotencyKey, CreateOperation, hash) is { } replay)
        {
            return replay;
        }

        var resolved = await ResolveAsync(work, draft, now, checkReference: true, checkInstrument: true);
        if (resolved.Refusal is { } refusal)
        {
            return refusal;
        }

        var created = await CalibrationRunStore.CreateAsync(work, resolved.Fields!, Conventions.Actor(http.User), now);
        var dto = ToDto(created);
        string location = $"/api/v1/calibrations/{created.Id}";
        await IdempotentCreate.RecordAsync(work, http, idempotencyKey, CreateOperation, hash, location, dto, json, now);
        await AuditTrail.RecordAsync(work, http, now, "create", Entity, created.Id, null, dto);
        await work.CommitAsync(ct);
        http.Response.Headers.ETag = Conventions.ETag(created.Version);
        return TypedResults.Created(location, dto);
    }

    /// <summary>PUT /api/v1/calibrations/{id}.</summary>
    public static async Task<Results<Ok<CalibrationRunDto>, ProblemHttpResult>> Update(long id, CalibrationRunRequest request, HttpContext http,
        IDbConnectionFactory database, TimeProvider time, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(http);
        ArgumentNullException.ThrowIfNull(time);
        var errors = new FieldErrors();
        var draft = Read(request, errors);
        if (draft is null || !errors.IsEmpty)
        {
            return Problems.Invalid(errors.ToDictionary());
        }

        var now = time.GetUtcNow();
        await using var work = await UnitOfWork.BeginAsync(database, ct);
        var current = await CalibrationRunStore.GetAsync(work, id);
        if (ChangeCheck.Refusal(current, http.Request, Noun, id) is { } refused)
        {
            return refused;
        }

        if (current!.Readings is not null && draft.InstrumentId != current.Fields.InstrumentId)
        {
            return Problems.Conflict("instrumentId", "The instrument cannot change.",
                "Readings are uploaded for this run and were converted with its instrument's nominal frequency; record a new run instead.");
        }

        var resolved = await ResolveAsync(work, draft, now, checkReference: draft.ReferenceId != current.Fields.ReferenceId,
            checkInstrument: draft.InstrumentId != current.Fields.InstrumentId);
        if (resolved.Refusal is { } refusal)
        {
            return refusal;
        }

        await CalibrationRunStore.UpdateAsync(work, id, current.Version, resolved.Fields!, Conventions.Actor(http.User), now);
        var updated = (await CalibrationRunStore.GetAsync(work, id))!;
        var dto = ToDto(updated);
        await AuditTrail.RecordAsync(work, http, now, "update", Entity, id, null, dto);
        await work.CommitAsync(ct);
        http.Response.Headers.ETag = Conventions.ETag(updated.Version);
        return TypedResults.Ok(dto);
    }

    /// <summary>POST /api/v1/calibrations/{id}/retire.</summary>
    public static Task<Results<Ok<CalibrationRunDto>, ProblemHttpResult>> Retire(long id, RetireRequest request, HttpContext http,
        IDbConnectionFactory database, TimeProvider time, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(request);
        return ChangeCheck.RetireAsync(id, request.Reason, http, database, time, Noun, Entity, CalibrationRunStore.GetAsync, CalibrationRunStore.RetireAsync, (r, _) => ToDto(r), ct);
    }

    /// <summary>The answer shape of a run.</summary>
    public static CalibrationRunDto ToDto(CalibrationRun run)
    {
        ArgumentNullException.ThrowIfNull(run);
        var f = run.Fields;
        var e = f.Environment;
        return new CalibrationRunDto(run.Id, f.InstrumentId, run.InstrumentAssetNumber, f.ReferenceId, run.ReferenceIdentity,
            new ComparatorDto(f.Comparator, f.ComparatorResolution, f.ComparatorSystematic), f.GateTimeSeconds, new StoredRunPostureDto(f.PostureName, [f.UpX, f.UpY, f.UpZ]),
            new EnvironmentDto(e.TemperatureCelsius, e.TemperatureVariationKelvin, e.RelativeHumidityPercent, e.Supply), f.Condition, run.Operator,
            f.StartedAt, f.EndedAt, f.Notes,
            run.Readings is { } r ? new RunReadingsDto(r.UploadId, r.Count, r.Sha256, r.Uploads) : null,
            run.RetiredAt is null ? "active" : "retired", run.RetiredAt, run.RetiredReason, run.Version, run.CreatedAt, run.CreatedBy, run.UpdatedAt, run.UpdatedBy,
            f.WarmUpMinutes);
    }

    private static ProblemHttpResult NotFound(long id) =>
        Problems.Status(StatusCodes.Status404NotFound, "No such calibration run.", $"No calibration run has the id {id}.");

    /// <summary>A request read and checked on its own, before the instrument and reference are looked up.</summary>
    private sealed record Draft(long InstrumentId, long ReferenceId, string Comparator, double Resolution, double GateTime, string? PostureName,
        double[]? Up, RunEnvironment Environment, string Condition, DateTimeOffset StartedAt, DateTimeOffset? EndedAt, string Notes, double? WarmUpMinutes,
        double? ComparatorSystematic);

    private static Draft? Read(CalibrationRunRequest? r, FieldErrors errors)
    {
        if (r is null)
        {
            errors.Add("body", "Required.");
            return null;
        }

        if (r.InstrumentId is null)
        {
            errors.Add("instrumentId", "Required: the id of the instrument calibrated.");
        }

        if (r.ReferenceId is null)
        {
            errors.Add("referenceId", "Required: the id of the reference standard.");
        }

        string? comparator = null;
        double? resolution = null;
        if (r.Comparator is null)
        {
            errors.Add("comparator", "Required: the comparator's name and its resolution at the gate time.");
        }
        else
        {
            comparator = errors.Text(r.Comparator.Name, "comparator.name", 200);
            if (r.Comparator.Resolution is null)
            {
                errors.Add("comparator.resolution", "Required: the resolution at the gate time, as a fractional frequency.");
            }

            resolution = errors.Positive(r.Comparator.Resolution, "comparator.resolution");
            errors.NonNegative(r.Comparator.SystematicError, "comparator.systematicError");
        }

        errors.NonNegative(r.WarmUpMinutes, "warmUpMinutes");

        if (r.GateTimeSeconds is null)
        {
            errors.Add("gateTimeSeconds", "Required, in seconds.");
        }

        double? gate = errors.Positive(r.GateTimeSeconds, "gateTimeSeconds");
        string? postureName = null;
        double[]? up = null;
        bool hasUp = r.Posture?.Up is { ValueKind: not JsonValueKind.Null and not JsonValueKind.Undefined };
        if (r.Posture is null || (r.Posture.Name is null) == !hasUp)
        {
            errors.Add("posture", "Required: exactly one of name (one of the instrument's postures) or up (an explicit up vector).");
        }
        else if (r.Posture.Name is not null)
        {
            postureName = errors.Text(r.Posture.Name, "posture.name", 100);
        }
        else if (OrientationApi.ReadPosture(r.Posture.Up, "posture.up", errors) is { } p)
        {
            up = [p.Up.X, p.Up.Y, p.Up.Z];
        }

        var env = r.Environment ?? new EnvironmentDto(null, null, null, null);
        if (env.TemperatureCelsius is double t && (!double.IsFinite(t) || t < -50 || t > 100))
        {
            errors.Add("environment.temperatureCelsius", "A temperature in degC between -50 and 100.");
        }

        errors.NonNegative(env.TemperatureVariationKelvin, "environment.temperatureVariationKelvin");
        if (env.RelativeHumidityPercent is double h && (!double.IsFinite(h) || h < 0 || h > 100))
        {
            errors.Add("environment.relativeHumidityPercent", "Between 0 and 100.");
        }

        string supply = errors.Text(env.Supply, "environment.supply", 200, required: false) ?? "";
        if (r.Condition is null || !RunConditions.All.Contains(r.Condition))
        {
            errors.Add("condition", $"Required: one of {string.Join(", ", RunConditions.All)}.");
        }

        if (r.StartedAt is null)
        {
            errors.Add("startedAt", "Required (RFC 3339).");
        }
        else if (r.EndedAt is { } end && end <= r.StartedAt)
        {
            errors.Add("endedAt", "The end comes after the start.");
        }

        string notes = (r.Notes ?? "").Trim();
        if (notes.Length > 4000)
        {
            errors.Add("notes", "At most 4000 characters.");
        }
        else if (notes.Any(c => char.IsControl(c) && c is not '\n' and not '\r' and not '\t'))
        {
            errors.Add("notes", "Must not contain control characters other than line breaks and tabs.");
        }

        if (!errors.IsEmpty || comparator is null || resolution is null || gate is null)
        {
            return null;
        }

        return new Draft(r.InstrumentId!.Value, r.ReferenceId!.Value, comparator, resolution.Value, gate.Value, postureName, up,
            new RunEnvironment(env.TemperatureCelsius, env.TemperatureVariationKelvin, env.RelativeHumidityPercent, supply), r.Condition!,
            r.StartedAt!.Value.ToUniversalTime(), r.EndedAt?.ToUniversalTime(), notes, r.WarmUpMinutes, r.Comparator!.SystematicError);
    }

    private static async Task<(CalibrationRunFields? Fields, ProblemHttpResult? Refusal)> ResolveAsync(UnitOfWork work, Draft d, DateTimeOffset now,
        bool checkReference, bool checkInstrument)
    {
        var instrument = await InstrumentStore.GetAsync(work, d.InstrumentId);
        var reference = await ReferenceStandardStore.GetAsync(work, d.ReferenceId);
        var missing = new FieldErrors();
        if (instrument is null)
        {
            missing.Add("instrumentId", $"No instrument has the id {d.InstrumentId}.");
        }

        if (reference is null)
        {
            missing.Add("referenceId", $"No reference standard has the id {d.ReferenceId}.");
        }

        if (!missing.IsEmpty)
        {
            return (null, Problems.NotComputable(missing.ToDictionary()));
        }

        if (checkInstrument && instrument!.RetiredAt is not null)
        {
            return (null, Problems.Conflict("instrumentId", "The instrument is retired.", $"The instrument '{instrument.Fields.AssetNumber}' is retired: it gets no new runs."));
        }

        if (checkReference && reference!.UsableAt(now) is { Usable: false } unusable)
        {
            return (null, Problems.Conflict("referenceId", "The reference standard cannot be used.", unusable.Reason!));
        }

        double[] up;
        if (d.PostureName is { } name)
        {
            var posture = instrument!.Fields.Postures.FirstOrDefault(p => p.Name == name);
            if (posture is null)
            {
                string known = instrument.Fields.Postures.Count == 0 ? "it has none; give an up vector instead" : "its postures are " + string.Join(", ", instrument.Fields.Postures.Select(p => $"'{p.Name}'"));
                return (null, Problems.NotComputable(new Dictionary<string, string[]> { ["posture.name"] = [$"Not one of the instrument's postures: {known}."] }));
            }

            up = [posture.X, posture.Y, posture.Z];
        }
        else
        {
            up = d.Up!;
        }

        return (new CalibrationRunFields(d.InstrumentId, d.ReferenceId, d.Comparator, d.Resolution, d.GateTime, d.PostureName, up[0], up[1], up[2],
            d.Environment, d.Condition, d.StartedAt, d.EndedAt, d.Notes, d.WarmUpMinutes, d.ComparatorSystematic), null);
    }
}
