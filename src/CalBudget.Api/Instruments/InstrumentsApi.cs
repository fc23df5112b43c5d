using System.Text.Json;
using CalBudget.Api.Analytics;
using CalBudget.Api.Auth;
using CalBudget.Api.Calibrations;
using CalBudget.Api.Hosting;
using CalBudget.Api.References;
using CalBudget.Data;
using CalBudget.Data.Calibrations;
using CalBudget.Data.Instruments;
using Microsoft.AspNetCore.Http.HttpResults;
using Microsoft.AspNetCore.Http.Json;
using Microsoft.Extensions.Options;
using FromHeaderAttribute = Microsoft.AspNetCore.Mvc.FromHeaderAttribute;

namespace CalBudget.Api.Instruments;

/// <summary>Instruments and their timebases under <c>/api/v1/instruments</c>.</summary>
public static class InstrumentsApi
{
    /// <summary>The body frame every posture is expressed in.</summary>
    public const string BodyFrame = "+x to the right seen from the front panel, +y toward the rear, +z up through the top cover";

    private const string CreateOperation = "instruments.create";
    private const string Noun = "instrument";
    private const string Entity = "instrument";
    private const int RecentRuns = 10;

    /// <summary>Maps the routes.</summary>
    public static IEndpointRouteBuilder MapInstrumentsApi(this IEndpointRouteBuilder routes)
    {
        var read = routes.MapGroup("/api/v1/instruments").WithTags("Instruments").RequireAuthorization(Policies.AnyRole);
        read.MapGet("/", List).WithName("ListInstruments").WithSummary("List instruments, in id order, a page at a time")
            .WithDescription("Filters: customer (exact), kind (oscillator kind), text (in asset number, manufacturer, model, serial number, description), includeRetired. limit 1 to 200 (default 50); nextCursor is passed back as cursor.")
            .ProducesValidationProblem(StatusCodes.Status400BadRequest);
        read.MapGet("/{id:long}", Get).WithName("GetInstrument").WithSummary("Read an instrument with its newest calibration runs (ETag: its version)")
            .ProducesProblem(StatusCodes.Status404NotFound);

        var write = routes.MapGroup("/api/v1/instruments").WithTags("Instruments").RequireAuthorization(Policies.Writer);
        write.MapPost("/", Create).WithName("CreateInstrument").WithSummary("Register an instrument and its timebase")
            .WithDescription($"Postures are up vectors in the body frame ({BodyFrame}). Idempotency-Key (optional): a replay with the same body returns the first answer; with another body, 422.")
            .Accepts<InstrumentRequest>("application/json")
            .Produces<InstrumentDto>(StatusCodes.Status201Created)
            .ProducesValidationProblem(StatusCodes.Status400BadRequest).ProducesProblem(StatusCodes.Status409Conflict)
            .ProducesValidationProblem(StatusCodes.Status422UnprocessableEntity);
        write.MapPut("/{id:long}", Update).WithName("UpdateInstrument").WithSummary("Replace an instrument's record (If-Match required)")
            .Accepts<InstrumentRequest>("application/json")
            .ProducesChangeRefusals();

        routes.MapGroup("/api/v1/instruments").WithTags("Instruments").RequireAuthorization(Policies.Admin)
            .MapPost("/{id:long}/retire", Retire).WithName("RetireInstrument").WithSummary("Retire an instrument (If-Match required); it stays on record")
            .Accepts<RetireRequest>("application/json")
            .ProducesChangeRefusals();
        return routes;
    }

    /// <summary>GET /api/v1/instruments.</summary>
    public static async Task<Results<Ok<Page<InstrumentDto>>, ProblemHttpResult>> List(InstrumentStore store, IOptions<JsonOptions> json,
        int? limit, string? cursor, string? customer, string? kind, string? text, bool? includeRetired, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(store);
        var errors = new FieldErrors();
        var (take, after) = Conventions.PageRequest(limit, cursor, errors);
        if (kind is not null && !OscillatorKinds.All.Contains(kind))
        {
            errors.Add("kind", $"One of {string.Join(", ", OscillatorKinds.All)}.");
        }

        if (!errors.IsEmpty)
        {
            return Problems.Invalid(errors.ToDictionary());
        }

        var rows = await store.ListAsync(after, take + 1, string.IsNullOrWhiteSpace(customer) ? null : customer.Trim(), kind,
            string.IsNullOrWhiteSpace(text) ? null : text.Trim(), includeRetired ?? false, ct);
        return TypedResults.Ok(Conventions.Page(rows, take, r => ToDto(r, json), r => r.Id));
    }

    /// <summary>GET /api/v1/instruments/{id}.</summary>
    public static async Task<Results<Ok<InstrumentDto>, ProblemHttpResult>> Get(long id, InstrumentStore store, CalibrationRunStore runs, IOptions<JsonOptions> json,
        HttpResponse response, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(store);
        ArgumentNullException.ThrowIfNull(runs);
        ArgumentNullException.ThrowIfNull(response);
        var r = await store.GetAsync(id, ct);
        if (r is null)
        {
            return Problems.Status(StatusCodes.Status404NotFound, "No such instrument.", $"No instrument has the id {id}.");
        }

        var recent = await runs.RecentAsync(id, RecentRuns, ct);
        response.Headers.ETag = Conventions.ETag(r.Version);
        return TypedResults.Ok(ToDto(r, json) with { RecentCalibrations = recent.Select(CalibrationsApi.ToDto).ToArray() });
    }

    /// <summary>POST /api/v1/instruments.</summary>
    public static async Task<IResult> Create(InstrumentRequest request, HttpContext http, IDbConnectionFactory database, TimeProvider time,
        IOptions<JsonOptions> json, [FromHeader(Name = Conventions.IdempotencyKeyHeader)] string? idempotencyKey, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(http);
        ArgumentNullException.ThrowIfNull(time);
        var errors = new FieldErrors();
        var fields = Map(request, errors, json);
        IdempotentCreate.CheckKey(idempotencyKey, errors);
        if (fields is null || !errors.IsEmpty)
        {
            return Problems.Invalid(errors.ToDictionary());
        }

        byte[] hash = Conventions.RequestHash(request, json);
        await using var work = await UnitOfWork.BeginAsync(database, ct);
        if (await IdempotentCreate.ReplayAsync(work, http, idempotencyKey, CreateOperation, hash) is { } replay)
        {
            return replay;
        }

        if (await InstrumentStore.AssetNumberTakenAsync(work, fields.AssetNumber))
        {
            return Problems.Status(StatusCodes.Status409Conflict, "The asset number is taken.", $"An instrument with the asset number '{fields.AssetNumber}' is on record already.");
        }

        var now = time.GetUtcNow();
        var created = await InstrumentStore.CreateAsync(work, fields, Conventions.Actor(http.User), now);
        var dto = ToDto(created, json);
        string location = $"/api/v1/instruments/{created.Id}";
        await IdempotentCreate.RecordAsync(work, http, idempotencyKey, CreateOperation, hash, location, dto, json, now);
        await AuditTrail.RecordAsync(work, http, now, "create", Entity, created.Id, null, dto);
        await work.CommitAsync(ct);
        http.Response.Headers.ETag = Conventions.ETag(created.Version);
        return TypedResults.Created(location, dto);
    }

    /// <summary>PUT /api/v1/instruments/{id}.</summary>
    public static async Task<Results<Ok<InstrumentDto>, ProblemHttpResult>> Update(long id, InstrumentRequest request, HttpContext http,
        IDbConnectionFactory database, TimeProvider time, IOptions<JsonOptions> json, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(http);
        ArgumentNullException.ThrowIfNull(time);
        var errors = new FieldErrors();
        var fields = Map(request, errors, json);
        if (fields is null || !errors.IsEmpty)
        {
            return Problems.Invalid(errors.ToDictionary());
        }

        await using var work = await UnitOfWork.BeginAsync(database, ct);
        var current = await InstrumentStore.GetAsync(work, id);
        if (ChangeCheck.Refusal(current, http.Request, Noun, id) is { } refused)
        {
            return refused;
        }

        if (await InstrumentStore.AssetNumberTakenAsync(work, fields.AssetNumber, id))
        {
            return Problems.Status(StatusCodes.Status409Conflict, "The asset number is taken.", $"Another instrument has the asset number '{fields.AssetNumber}'.");
        }

        var now = time.GetUtcNow();
        await InstrumentStore.UpdateAsync(work, id, current!.Version, fields, Conventions.Actor(http.User), now);
        var updated = (await InstrumentStore.GetAsync(work, id))!;
        var dto = ToDto(updated, json);
        await AuditTrail.RecordAsync(work, http, now, "update", Entity, id, null, dto);
        await work.CommitAsync(ct);
        http.Response.Headers.ETag = Conventions.ETag(updated.Version);
        return TypedResults.Ok(dto);
    }

    /// <summary>POST /api/v1/instruments/{id}/retire.</summary>
    public static Task<Results<Ok<InstrumentDto>, ProblemHttpResult>> Retire(long id, RetireRequest request, HttpContext http,
        IDbConnectionFactory database, TimeProvider time, IOptions<JsonOptions> json, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(request);
        return ChangeCheck.RetireAsync(id, request.Reason, http, database, time, Noun, Entity, InstrumentStore.GetAsync, InstrumentStore.RetireAsync, (r, _) => ToDto(r, json), ct);
    }

    private static InstrumentFields? Map(InstrumentRequest? r, FieldErrors errors, IOptions<JsonOptions> json)
    {
        if (r is null)
        {
            errors.Add("body", "Required.");
            return null;
        }

        string? asset = errors.Text(r.AssetNumber, "assetNumber", 100);
        string? customer = errors.Text(r.Customer, "customer", 200);
        string manufacturer = errors.Text(r.Manufacturer, "manufacturer", 200, required: false) ?? "";
        string model = errors.Text(r.Model, "model", 200, required: false) ?? "";
        string serial = errors.Text(r.SerialNumber, "serialNumber", 200, required: false) ?? "";
        string description = errors.Text(r.Description, "description", 1000, required: false) ?? "";
        var t = r.Timebase;
        if (t is null)
        {
            errors.Add("timebase", "Required: the oscillator kind and nominal frequency at least.");
            return null;
        }

        if (t.OscillatorKind is null || !OscillatorKinds.All.Contains(t.OscillatorKind))
        {
            errors.Add("timebase.oscillatorKind", $"Required: one of {string.Join(", ", OscillatorKinds.All)}.");
        }

        if (t.NominalFrequencyHz is null)
        {
            errors.Add("timebase.nominalFrequencyHz", "Required, in Hz.");
        }

        double? nominal = errors.Positive(t.NominalFrequencyHz, "timebase.nominalFrequencyHz");
        var spec = t.Specification ?? new TimebaseSpecificationDto(null, null, null, null, null, null, null, null);
        CheckSpecification(spec, errors);
        var postures = new List<NamedPosture>();
        var names = new HashSet<string>(StringComparer.Ordinal);
        if (r.Postures is { Count: > 50 })
        {
            errors.Add("postures", "At most 50 postures.");
        }
        else
        {
            for (int i = 0; i < (r.Postures?.Count ?? 0); i++)
            {
                var p = r.Postures![i];
                string? name = errors.Text(p?.Name, $"postures[{i}].name", 100);
                var posture = OrientationApi.ReadPosture(p?.Up, $"postures[{i}].up", errors);
                if (name is not null && !names.Add(name))
                {
                    errors.Add($"postures[{i}].name", $"The name '{name}' is used by an earlier posture.");
                }
                else if (name is not null && posture is { } up)
                {
                    postures.Add(new NamedPosture(name, up.Up.X, up.Up.Y, up.Up.Z));
                }
            }
        }

        if (!errors.IsEmpty || asset is null || customer is null || nominal is null)
        {
            return null;
        }

        return new InstrumentFields(asset, customer, manufacturer, model, serial, description, t.OscillatorKind!, nominal.Value,
            JsonSerializer.Serialize(spec, json.Value.SerializerOptions), postures);
    }

    private static void CheckSpecification(TimebaseSpecificationDto s, FieldErrors errors)
    {
        const string at = "timebase.specification";
        if (s.Tolerance is { } tol)
        {
            double? lower = errors.Finite(tol.Lower, $"{at}.tolerance.lower");
            double? upper = errors.Finite(tol.Upper, $"{at}.tolerance.upper");
            if (tol.Lower is null && tol.Upper is null)
            {
                errors.Add($"{at}.tolerance", "Give a lower limit, an upper limit or both.");
            }
            else if (lower is double lo && upper is double hi && !(lo < hi))
            {
                errors.Add($"{at}.tolerance", "The lower limit lies below the upper limit.");
            }

            errors.Text(tol.Conditions, $"{at}.tolerance.conditions", 500, required: false);
        }

        errors.Finite(s.AgingPerDay, $"{at}.agingPerDay");
        errors.Finite(s.AgingPerYear, $"{at}.agingPerYear");
        errors.Finite(s.TemperatureCoefficientPerKelvin, $"{at}.temperatureCoefficientPerKelvin");
        if (s.TemperatureRangeCelsius is { } range)
        {
            double? min = errors.Finite(range.Min, $"{at}.temperatureRangeCelsius.min");
            double? max = errors.Finite(range.Max, $"{at}.temperatureRangeCelsius.max");
            if (min is null || max is null || !(min < max))
            {
                errors.Add($"{at}.temperatureRangeCelsius", "Give min and max, min below max.");
            }
        }

        errors.NonNegative(s.AccelerationSensitivityPerG, $"{at}.accelerationSensitivityPerG");
        errors.NonNegative(s.WarmUpMinutes, $"{at}.warmUpMinutes");
        errors.NonNegative(s.Retrace, $"{at}.retrace");
    }

    private static InstrumentDto ToDto(Instrument i, IOptions<JsonOptions> json)
    {
        var f = i.Fields;
        var spec = JsonSerializer.Deserialize<TimebaseSpecificationDto>(f.SpecificationJson, json.Value.SerializerOptions);
        return new InstrumentDto(i.Id, f.AssetNumber, f.Customer, f.Manufacturer, f.Model, f.SerialNumber, f.Description,
            new TimebaseDto(f.OscillatorKind, f.NominalFrequencyHz, spec), BodyFrame,
            f.Postures.Select(p => new StoredPostureDto(p.Name, [p.X, p.Y, p.Z])).ToArray(),
            i.RetiredAt is null ? "active" : "retired", i.RetiredAt, i.RetiredReason, i.Version, i.CreatedAt, i.CreatedBy, i.UpdatedAt, i.UpdatedBy);
    }
}
