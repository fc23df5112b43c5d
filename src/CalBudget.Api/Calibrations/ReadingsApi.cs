using System.Globalization;
using System.Security.Cryptography;
using System.Text;
using System.Text.Json;
using CalBudget.Api.Auth;
using CalBudget.Api.Hosting;
using CalBudget.Data;
using CalBudget.Data.Calibrations;
using CalBudget.Data.Instruments;
using Microsoft.AspNetCore.Http.HttpResults;
using Microsoft.AspNetCore.Http.Json;
using Microsoft.Extensions.Options;
using Microsoft.Net.Http.Headers;
using FromHeaderAttribute = Microsoft.AspNetCore.Mvc.FromHeaderAttribute;

namespace CalBudget.Api.Calibrations;

/// <summary>
/// The readings of a run under <c>/api/v1/calibrations/{id}/readings</c>: uploads kept exactly as received with their SHA-256,
/// the parsed table, corrections as new uploads with a reason.
/// </summary>
public static class ReadingsApi
{
    private const string UploadOperation = "readings.upload";
    private const string JsonMediaType = "application/json";

    /// <summary>The CSV form, for the OpenAPI document.</summary>
    public const string CsvDescription = """
        Readings as text/csv (UTF-8), one reading a line after a header row. Columns, in any order, names case-insensitive:
        timestamp (RFC 3339 with Z or an offset, strictly increasing), exactly one of frequencyHz (the frequency read, Hz) or
        fractionalOffset ((f - f0) / f0, dimensionless), and optionally gateTimeSeconds (blank: the run's gate time).
        Example: "timestamp,frequencyHz\n2026-11-30T09:00:01Z,10000000.000012\n". Or application/json:
        {"readings":[{"timestamp":"2026-11-30T09:00:01Z","frequencyHz":10000000.000012}]}.
        The first upload needs no reason; every later one is a correction and needs ?reason=; the earlier uploads stay.
        Refusals name the field and line ("line 12: frequencyHz"): a bad number, a missing column or an empty file 400;
        unsorted or duplicate timestamps 422; a file over the limit 413. A refused upload leaves nothing behind.
        Idempotency-Key (optional): the same key with the same bytes and reason returns the first answer.
        """;

    /// <summary>Maps the routes.</summary>
    public static IEndpointRouteBuilder MapReadingsApi(this IEndpointRouteBuilder routes)
    {
        var read = routes.MapGroup("/api/v1/calibrations/{id:long}/readings").WithTags("Readings").RequireAuthorization(Policies.AnyRole);
        read.MapGet("/", GetTable).WithName("GetReadings").WithSummary("The run's readings in force (or ?upload=), as JSON or CSV by Accept")
            .WithDescription("Accept: application/json (default) or text/csv (columns timestamp, fractionalOffset, frequencyHz, gateTimeSeconds). Other types 406. ETag names the upload.")
            .Produces<ReadingsTableDto>(StatusCodes.Status200OK, JsonMediaType, ReadingsCsvParser.MediaType)
            .ProducesProblem(StatusCodes.Status404NotFound).ProducesProblem(StatusCodes.Status406NotAcceptable);
        read.MapGet("/uploads", ListUploads).WithName("ListReadingUploads").WithSummary("Every upload of the run's readings, oldest first")
            .ProducesProblem(StatusCodes.Status404NotFound);
        read.MapGet("/uploads/{uploadId:long}", GetUpload).WithName("GetReadingUpload").WithSummary("One upload's record")
            .ProducesProblem(StatusCodes.Status404NotFound);
        read.MapGet("/uploads/{uploadId:long}/content", GetContent).WithName("GetReadingUploadContent")
            .WithSummary("One upload's bytes exactly as received, with their SHA-256 in Repr-Digest (RFC 9530)")
            .Produces<string>(StatusCodes.Status200OK, ReadingsCsvParser.MediaType, JsonMediaType)
            .ProducesProblem(StatusCodes.Status404NotFound);

        routes.MapGroup("/api/v1/calibrations/{id:long}/readings").WithTags("Readings").RequireAuthorization(Policies.Writer)
            .MapPost("/", Upload).WithName("UploadReadings").WithSummary("Upload the run's readings (text/csv or application/json)")
            .WithDescription(CsvDescription)
            .WithMetadata(new LargeUploadMetadata())
            .Accepts<ReadingsUploadRequest>(JsonMediaType, ReadingsCsvParser.MediaType)
            .Produces<ReadingUploadDto>(StatusCodes.Status201Created)
            .ProducesValidationProblem(StatusCodes.Status400BadRequest).ProducesProblem(StatusCodes.Status404NotFound)
            .ProducesProblem(StatusCodes.Status409Conflict).ProducesProblem(StatusCodes.Status413PayloadTooLarge)
            .ProducesProblem(StatusCodes.Status415UnsupportedMediaType).ProducesValidationProblem(StatusCodes.Status422UnprocessableEntity);
        return routes;
    }

    /// <summary>POST /api/v1/calibrations/{id}/readings.</summary>
    public static async Task<IResult> Upload(long id, string? reason, HttpContext http, IDbConnectionFactory database, TimeProvider time,
        IOptions<JsonOptions> json, IOptions<CalBudgetOptions> options,
        [FromHeader(Name = Conventions.IdempotencyKeyHeader)] string? idempotencyKey, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(http);
        return await UploadAsync(id, reason, http.Request.ContentType, http.Request.Body, http, database, time, json, options, idempotencyKey, ct);
    }

    /// <summary>The upload from any stream (the request body, or a file from the staff pages' form) with its content type.</summary>
    public static async Task<IResult> UploadAsync(long id, string? reason, string? contentType, Stream body, HttpContext http, IDbConnectionFactory database,
        TimeProvider time, IOptions<JsonOptions> json, IOptions<CalBudgetOptions> options, string? idempotencyKey, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(http);
        ArgumentNullException.ThrowIfNull(time);
        ArgumentNullException.ThrowIfNull(json);
        ArgumentNullException.ThrowIfNull(options);
        string? mediaType = UploadMediaType(contentType);
        if (mediaType is null)
        {
            return Problems.Status(StatusCodes.Status415UnsupportedMediaType, "Readings are text/csv or application/json.",
                "Send Content-Type: text/csv (UTF-8) or application/json.");
        }

        var errors = new FieldErrors();
        string? why = errors.Text(reason, "reason", 1000, required: false);
        IdempotentCreate.CheckKey(idempotencyKey, errors);
        if (!errors.IsEmpty)
        {
            return Problems.Invalid(errors.ToDictionary());
        }

        // The body is spooled to a temporary file first, so that a slow client never holds the database's write lock.
        await using var spool = new FileStream(Path.Combine(Path.GetTempPath(), $"calbudget-readings-{Guid.NewGuid():N}.tmp"), FileMode.CreateNew,
            FileAccess.ReadWrite, FileShare.None, 1 << 16, FileOptions.DeleteOnClose | FileOptions.Asynchronous);
        byte[] bodyHash = await SpoolAsync(body, spool, ct);
        if (spool.Length == 0)
        {
            return Problems.Invalid(new Dictionary<string, string[]> { ["body"] = ["The file is empty: it needs a header row and at least one reading."] });
        }

        if (mediaType == JsonMediaType && spool.Length > options.Value.MaxRequestBodyBytes)
        {
            return Problems.Status(StatusCodes.Status413PayloadTooLarge, "The request body is too large.",
                $"JSON readings are limited to {options.Value.MaxRequestBodyBytes} bytes; send larger sets as text/csv (up to {options.Value.MaxReadingsUploadBytes} bytes).");
        }

        byte[] requestHash = SHA256.HashData(Encoding.UTF8.GetBytes($"{id}\n{mediaType}\n{why}\n{Convert.ToHexStringLower(bodyHash)}"));
        await using var work = await UnitOfWork.BeginAsync(database, ct);
        if (await IdempotentCreate.ReplayAsync(work, http, idempotencyKey, UploadOperation, requestHash) is { } replay)
        {
            return replay;
        }

        var run = await CalibrationRunStore.GetAsync(work, id);
        if (run is null)
        {
            return Problems.Status(StatusCodes.Status404NotFound, "No such calibration run.", $"No calibration run has the id {id}.");
        }

        if (run.RetiredAt is not null)
        {
            return Problems.Status(StatusCodes.Status409Conflict, "The calibration run is retired.", "A retired run gets no new readings.");
        }

        var latest = await ReadingStore.LatestAsync(work, id);
        if (latest is not null && why is null)
        {
            return Problems.Invalid(new Dictionary<string, string[]>
            {
                ["reason"] = [$"The run has readings already (upload {latest.Id}); a new upload is a correction and says why (?reason=). The earlier upload stays on record."],
            });
        }

        var instrument = (await InstrumentStore.GetAsync(work, run.Fields.InstrumentId))!;
        var rules = new ReadingRules(instrument.Fields.NominalFrequencyHz);
        var now = time.GetUtcNow();
        await using var writer = await ReadingStore.BeginUploadAsync(work, id, latest?.Id, why, mediaType, Conventions.Actor(http.User), now);
        spool.Position = 0;
        string quantity;
        try
        {
            quantity = mediaType == ReadingsCsvParser.MediaType
                ? await WriteCsvAsync(spool, writer, rules, ct)
                : await WriteJsonAsync(spool, writer, rules, json.Value.SerializerOptions, ct);
        }
        catch (ReadingsFormatException refused)
        {
            return Refusal(refused);
        }

        var upload = await writer.CompleteAsync(quantity, ct);
        var dto = ToDto(upload);
        string location = $"/api/v1/calibrations/{id}/readings/uploads/{upload.Id}";
        await IdempotentCreate.RecordAsync(work, http, idempotencyKey, UploadOperation, requestHash, location, dto, json, now);
        await AuditTrail.RecordAsync(work, http, now, latest is null ? "upload" : "correct", "readings", upload.Id, why, dto);
        await work.CommitAsync(ct);
        return TypedResults.Created(location, dto);
    }

    /// <summary>GET /api/v1/calibrations/{id}/readings.</summary>
    public static async Task<IResult> GetTable(long id, long? upload, HttpContext http, CalibrationRunStore runs, ReadingStore readings, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(http);
        ArgumentNullException.ThrowIfNull(runs);
        ArgumentNullException.ThrowIfNull(readings);
        string? format = Negotiate(http.Request.Headers.Accept);
        if (format is null)
        {
            return Problems.Status(StatusCodes.Status406NotAcceptable, "Readings are served as application/json or text/csv.",
                "Ask for Accept: application/json or text/csv.");
        }

        if (await runs.GetAsync(id, ct) is null)
        {
            return Problems.Status(StatusCodes.Status404NotFound, "No such calibration run.", $"No calibration run has the id {id}.");
        }

        var chosen = upload is long u ? await readings.UploadAsync(id, u, ct) : await readings.LatestAsync(id, ct);
        if (chosen is null)
        {
            return Problems.Status(StatusCodes.Status404NotFound, upload is null ? "The run has no readings yet." : "No such upload.",
                upload is null ? "Upload them with POST to this address." : $"The run has no upload with the id {upload}.");
        }

        http.Response.Headers.ETag = $"\"upload-{chosen.Id}\"";
        http.Response.Headers.Vary = "Accept";
        return format == ReadingsCsvParser.MediaType
            ? TypedResults.Stream(body => WriteCsvTableAsync(body, readings.ReadingsAsync(chosen.Id, ct), ct), "text/csv; charset=utf-8")
            : TypedResults.Stream(body => WriteJsonTableAsync(body, id, chosen, readings.ReadingsAsync(chosen.Id, ct), ct), JsonMediaType);
    }

    /// <summary>GET /api/v1/calibrations/{id}/readings/uploads.</summary>
    public static async Task<Results<Ok<IReadOnlyList<ReadingUploadDto>>, ProblemHttpResult>> ListUploads(long id, CalibrationRunStore runs, ReadingStore readings, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(runs);
        ArgumentNullException.ThrowIfNull(readings);
        if (await runs.GetAsync(id, ct) is null)
        {
            return Problems.Status(StatusCodes.Status404NotFound, "No such calibration run.", $"No calibration run has the id {id}.");
        }

        return TypedResults.Ok<IReadOnlyList<ReadingUploadDto>>((await readings.UploadsAsync(id, ct)).Select(ToDto).ToArray());
    }

    /// <summary>GET /api/v1/calibrations/{id}/readings/uploads/{uploadId}.</summary>
    public static async Task<Results<Ok<ReadingUploadDto>, ProblemHttpResult>> GetUpload(long id, long uploadId, ReadingStore readings, HttpResponse response,
        CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(readings);
        ArgumentNullException.ThrowIfNull(response);
        if (await readings.UploadAsync(id, uploadId, ct) is not { } upload)
        {
            return Problems.Status(StatusCodes.Status404NotFound, "No such upload.", $"Calibration run {id} has no upload with the id {uploadId}.");
        }

        // an upload never changes: its ETag is its id
        response.Headers.ETag = $"\"upload-{upload.Id}\"";
        return TypedResults.Ok(ToDto(upload));
    }

    /// <summary>GET /api/v1/calibrations/{id}/readings/uploads/{uploadId}/content.</summary>
    public static async Task<IResult> GetContent(long id, long uploadId, HttpResponse response, ReadingStore readings, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(response);
        ArgumentNullException.ThrowIfNull(readings);
        if (await readings.UploadAsync(id, uploadId, ct) is not { } upload)
        {
            return Problems.Status(StatusCodes.Status404NotFound, "No such upload.", $"Calibration run {id} has no upload with the id {uploadId}.");
        }

        response.Headers["Repr-Digest"] = $"sha-256=:{Convert.ToBase64String(Convert.FromHexString(upload.Sha256))}:";
        response.Headers.ETag = $"\"upload-{upload.Id}\"";
        response.ContentLength = upload.ByteCount;
        return TypedResults.Stream(async body =>
        {
            await foreach (var part in readings.ContentAsync(upload.Id, ct))
            {
                await body.WriteAsync(part, ct);
            }
        }, upload.MediaType == ReadingsCsvParser.MediaType ? "text/csv; charset=utf-8" : JsonMediaType);
    }

    /// <summary>The answer shape of an upload.</summary>
    public static ReadingUploadDto ToDto(ReadingUpload u)
    {
        ArgumentNullException.ThrowIfNull(u);
        return new ReadingUploadDto(u.Id, u.RunId, u.SupersedesId, u.Reason, u.MediaType, u.Quantity, u.ByteCount, u.Sha256, u.Count, u.FirstAt, u.LastAt,
            u.UploadedAt, u.UploadedBy);
    }

    private static string? UploadMediaType(string? contentType)
    {
        if (!MediaTypeHeaderValue.TryParse(contentType, out var parsed))
        {
            return null;
        }

        if (parsed.Charset.HasValue && !parsed.Charset.Equals("utf-8", StringComparison.OrdinalIgnoreCase))
        {
            return null;
        }

        return parsed.MediaType.Equals(ReadingsCsvParser.MediaType, StringComparison.OrdinalIgnoreCase) ? ReadingsCsvParser.MediaType
            : parsed.MediaType.Equals(JsonMediaType, StringComparison.OrdinalIgnoreCase) ? JsonMediaType
            : null;
    }

    private static string? Negotiate(Microsoft.Extensions.Primitives.StringValues accept)
    {
        if (accept.Count == 0 || !MediaTypeHeaderValue.TryParseList(accept, out var types) || types.Count == 0)
        {
            return JsonMediaType;
        }

        foreach (var type in types.Where(t => (t.Quality ?? 1) > 0).OrderByDescending(t => t.Quality ?? 1))
        {
            if (type.MediaType.Equals(ReadingsCsvParser.MediaType, StringComparison.OrdinalIgnoreCase))
            {
                return ReadingsCsvParser.MediaType;
            }

            if (type.MediaType.Equals(JsonMediaType, StringComparison.OrdinalIgnoreCase) || type.MatchesAllTypes
                || type.MediaType.Equals("application/*", StringComparison.OrdinalIgnoreCase))
            {
                return JsonMediaType;
            }

            if (type.MediaType.Equals("text/*", StringComparison.OrdinalIgnoreCase))
            {
                return ReadingsCsvParser.MediaType;
            }
        }

        return null;
    }

    private static async Task<byte[]> SpoolAsync(Stream body, Stream spool, CancellationToken ct)
    {
        using var hash = IncrementalHash.CreateHash(HashAlgorithmName.SHA256);
        byte[] buffer = new byte[1 << 16];
        int read;
        while ((read = await body.ReadAsync(buffer, ct)) > 0)
        {
            hash.AppendData(buffer, 0, read);
            await spool.WriteAsync(buffer.AsMemory(0, read), ct);
        }

        return hash.GetHashAndReset();
    }

    internal static async Task<string> WriteCsvAsync(Stream spool, ReadingUploadWriter writer, ReadingRules rules, CancellationToken ct)
    {
        var parser = new ReadingsCsvParser(rules);
        byte[] buffer = new byte[1 << 16];
        int carry = 0;
        int line = 0;
        int read;
        while ((read = await spool.ReadAsync(buffer.AsMemory(carry), ct)) > 0)
        {
            await writer.AppendBytesAsync(buffer.AsMemory(carry, read), ct);
            int end = carry + read;
            int start = 0;
            int newline;
            while ((newline = buffer.AsSpan(start, end - start).IndexOf((byte)'\n')) >= 0)
            {
                line++;
                if (parser.TryRead(buffer.AsSpan(start, newline), line, out var reading))
                {
                    await writer.AddAsync(reading, ct);
                }

                start += newline + 1;
            }

            carry = end - start;
            if (carry > ReadingsCsvParser.MaxLineBytes)
            {
                throw new ReadingsFormatException($"line {line + 1}", $"Longer than {ReadingsCsvParser.MaxLineBytes} bytes: not a line of readings.", line + 1);
            }

            Buffer.BlockCopy(buffer, start, buffer, 0, carry);
        }

        if (carry > 0 && parser.TryRead(buffer.AsSpan(0, carry), ++line, out var last))
        {
            await writer.AddAsync(last, ct);
        }

        if (parser.Quantity is null)
        {
            throw new ReadingsFormatException("body", "The file is empty: it needs a header row and at least one reading.");
        }

        if (writer.Count == 0)
        {
            throw new ReadingsFormatException("body", "The file has a header row and no readings.", 1);
        }

        return parser.Quantity;
    }

    private static async Task<string> WriteJsonAsync(Stream spool, ReadingUploadWriter writer, ReadingRules rules, JsonSerializerOptions options, CancellationToken ct)
    {
        byte[] buffer = new byte[1 << 16];
        int read;
        while ((read = await spool.ReadAsync(buffer, ct)) > 0)
        {
            await writer.AppendBytesAsync(buffer.AsMemory(0, read), ct);
        }

        spool.Position = 0;
        ReadingsUploadRequest? request;
        try
        {
            request = await JsonSerializer.DeserializeAsync<ReadingsUploadRequest>(spool, options, ct);
        }
        catch (JsonException ex)
        {
            string field = string.IsNullOrEmpty(ex.Path) || ex.Path == "$" ? "body" : ex.Path.TrimStart('$', '.');
            throw new ReadingsFormatException(field, "Not valid JSON for readings: " + ex.Message.Split(" Path:", 2)[0]);
        }

        if (request?.Readings is not { Count: > 0 } list)
        {
            throw new ReadingsFormatException("readings", "Required: at least one reading.");
        }

        string? quantity = null;
        for (int i = 0; i < list.Count; i++)
        {
            string at = $"readings[{i}].";
            var r = list[i] ?? throw new ReadingsFormatException($"readings[{i}]", "A reading is an object.");
            if (r.Timestamp is null)
            {
                throw new ReadingsFormatException(at + "timestamp", "Required (RFC 3339).");
            }

            string mine = (r.FrequencyHz, r.FractionalOffset) switch
            {
                (not null, null) => ReadingQuantities.FrequencyHz,
                (null, not null) => ReadingQuantities.FractionalOffset,
                _ => throw new ReadingsFormatException(at + "frequencyHz", "Give exactly one of frequencyHz or fractionalOffset."),
            };
            if (quantity is not null && mine != quantity)
            {
                throw new ReadingsFormatException(at + mine, $"Every reading gives the same quantity; the first gave {quantity}.");
            }

            quantity = mine;
            await writer.AddAsync(rules.Make(at, null, r.Timestamp.Value, mine, (r.FrequencyHz ?? r.FractionalOffset)!.Value, r.GateTimeSeconds), ct);
        }

        return quantity!;
    }

    private static ProblemHttpResult Refusal(ReadingsFormatException refused)
    {
        var errors = new Dictionary<string, string[]> { [refused.Field] = [refused.Message] };
        var problem = refused.NotComputable ? Problems.NotComputable(errors, $"{refused.Field}: {refused.Message}") : Problems.Invalid(errors, $"{refused.Field}: {refused.Message}");
        if (refused.Line is int line)
        {
            problem.ProblemDetails.Extensions["line"] = line;
        }

        return problem;
    }

    private static async Task WriteCsvTableAsync(Stream body, IAsyncEnumerable<Reading> rows, CancellationToken ct)
    {
        await using var text = new StreamWriter(body, new UTF8Encoding(false), 1 << 16) { NewLine = "\n" };
        await text.WriteLineAsync("timestamp,fractionalOffset,frequencyHz,gateTimeSeconds");
        await foreach (var r in rows)
        {
            await text.WriteLineAsync(string.Create(CultureInfo.InvariantCulture,
                $"{FormatTime(r.AtTicks)},{r.FractionalOffset:R},{(r.FrequencyHz is double f ? f.ToString("R", CultureInfo.InvariantCulture) : "")},{(r.GateTimeSeconds is double g ? g.ToString("R", CultureInfo.InvariantCulture) : "")}"));
        }

        await text.FlushAsync(ct);
    }

    private static async Task WriteJsonTableAsync(Stream body, long runId, ReadingUpload upload, IAsyncEnumerable<Reading> rows, CancellationToken ct)
    {
        await using var json = new Utf8JsonWriter(body);
        json.WriteStartObject();
        json.WriteNumber("runId", runId);
        json.WriteNumber("uploadId", upload.Id);
        json.WriteString("sha256", upload.Sha256);
        json.WriteString("quantity", upload.Quantity);
        json.WriteNumber("count", upload.Count);
        json.WriteStartArray("readings");
        await foreach (var r in rows)
        {
            json.WriteStartObject();
            json.WriteString("timestamp", FormatTime(r.AtTicks));
            json.WritePropertyName("frequencyHz");
            if (r.FrequencyHz is double f)
            {
                json.WriteNumberValue(f);
            }
            else
            {
                json.WriteNullValue();
            }

            json.WriteNumber("fractionalOffset", r.FractionalOffset);
            json.WritePropertyName("gateTimeSeconds");
            if (r.GateTimeSeconds is double g)
            {
                json.WriteNumberValue(g);
            }
            else
            {
                json.WriteNullValue();
            }

            json.WriteEndObject();
            if (json.BytesPending > 1 << 15)
            {
                await json.FlushAsync(ct);
            }
        }

        json.WriteEndArray();
        json.WriteEndObject();
        await json.FlushAsync(ct);
    }

    private static string FormatTime(long ticks) =>
        ReadingTime.FromTicks(ticks).UtcDateTime.ToString("yyyy-MM-dd'T'HH:mm:ss.FFFFFFF'Z'", CultureInfo.InvariantCulture);
}

/// <summary>Marks an endpoint whose body may be as large as <see cref="CalBudgetOptions.MaxReadingsUploadBytes"/>.</summary>
public sealed class LargeUploadMetadata;
