using System.Text.Json;
using CalBudget.Data;
using CalBudget.Data.Idempotency;
using Microsoft.AspNetCore.Http.HttpResults;
using Microsoft.AspNetCore.Http.Json;
using Microsoft.Extensions.Options;

namespace CalBudget.Api.Hosting;

/// <summary>
/// The Idempotency-Key side of a creating POST, shared by every resource: look for an earlier answer inside the request's
/// unit of work before creating, and keep the new answer in the same transaction after.
/// </summary>
public static class IdempotentCreate
{
    /// <summary>The answer to replay (the stored body with its status and Location), a 422 when the key came with another body, or null to go on.</summary>
    public static async Task<IResult?> ReplayAsync(UnitOfWork work, HttpContext http, string? key, string operation, byte[] requestHash)
    {
        ArgumentNullException.ThrowIfNull(http);
        ArgumentNullException.ThrowIfNull(requestHash);
        if (key is null || await IdempotencyStore.FindAsync(work, Conventions.Actor(http.User), key, operation) is not { } earlier)
        {
            return null;
        }

        if (!earlier.RequestHash.AsSpan().SequenceEqual(requestHash))
        {
            return Problems.NotComputable(new Dictionary<string, string[]>
            {
                [Conventions.IdempotencyKeyHeader] = ["This key was used with another request body; use a new key for a new request."],
            });
        }

        if (earlier.Location is not null)
        {
            http.Response.Headers.Location = earlier.Location;
        }

        return TypedResults.Content(earlier.ResponseBody, "application/json", System.Text.Encoding.UTF8, (int)earlier.StatusCode);
    }

    /// <summary>Keeps a 201 answer for later replays (when a key was given), in the same transaction as the creation.</summary>
    public static async Task RecordAsync<T>(UnitOfWork work, HttpContext http, string? key, string operation, byte[] requestHash, string location, T body,
        IOptions<JsonOptions> json, DateTimeOffset now)
    {
        ArgumentNullException.ThrowIfNull(http);
        ArgumentNullException.ThrowIfNull(json);
        if (key is null)
        {
            return;
        }

        string text = JsonSerializer.Serialize(body, json.Value.SerializerOptions);
        await IdempotencyStore.SaveAsync(work, Conventions.Actor(http.User), key, operation,
            new IdempotencyRecord(requestHash, StatusCodes.Status201Created, location, text), now);
    }

    /// <summary>The check of the header itself.</summary>
    public static void CheckKey(string? key, FieldErrors errors)
    {
        ArgumentNullException.ThrowIfNull(errors);
        if (key is { Length: > 200 } || key is { Length: 0 })
        {
            errors.Add(Conventions.IdempotencyKeyHeader, "1 to 200 characters.");
        }
    }
}

/// <summary>The decision whether a stored record may change, shared by every resource.</summary>
public static class ChangeCheck
{
    /// <summary>
    /// The retirement of a record, the same for every resource: a reason (1 to 1000 characters), the change checks, the
    /// retirement in one unit of work, and the retired record with its new ETag.
    /// </summary>
    public static async Task<Results<Ok<TDto>, ProblemHttpResult>> RetireAsync<TRecord, TDto>(long id, string? reason, HttpContext http,
        IDbConnectionFactory database, TimeProvider time, string what, string entityType, Func<UnitOfWork, long, Task<TRecord?>> read,
        Func<UnitOfWork, long, long, string, string, DateTimeOffset, Task<bool>> retire, Func<TRecord, DateTimeOffset, TDto> answer, CancellationToken ct)
        where TRecord : class, IVersionedRecord
    {
        ArgumentNullException.ThrowIfNull(http);
        ArgumentNullException.ThrowIfNull(time);
        ArgumentNullException.ThrowIfNull(read);
        ArgumentNullException.ThrowIfNull(retire);
        ArgumentNullException.ThrowIfNull(answer);
        var errors = new FieldErrors();
        string? why = errors.Text(reason, "reason", 1000);
        if (why is null)
        {
            return Problems.Invalid(errors.ToDictionary());
        }

        await using var work = await UnitOfWork.BeginAsync(database, ct);
        var current = await read(work, id);
        if (Refusal(current, http.Request, what, id) is { } refused)
        {
            return refused;
        }

        var now = time.GetUtcNow();
        await retire(work, id, current!.Version, why, Conventions.Actor(http.User), now);
        var retired = (await read(work, id))!;
        var dto = answer(retired, now);
        await AuditTrail.RecordAsync(work, http, now, "retire", entityType, id, why, dto);
        await work.CommitAsync(ct);
        http.Response.Headers.ETag = Conventions.ETag(retired.Version);
        return TypedResults.Ok(dto);
    }

    /// <summary>Null when the change may go ahead; else 404, 428 or 412 (If-Match), or 409 (retired).</summary>
    public static ProblemHttpResult? Refusal(IVersionedRecord? current, HttpRequest request, string what, long id)
    {
        if (current is null)
        {
            return Problems.Status(StatusCodes.Status404NotFound, $"No such {what}.", $"No {what} has the id {id}.");
        }

        if (Conventions.CheckIfMatch(request, current.Version) is { } precondition)
        {
            return precondition;
        }

        return current.RetiredAt is not null
            ? Problems.Status(StatusCodes.Status409Conflict, $"The {what} is retired.", $"A retired {what} stays on record as it was; it cannot be changed.")
            : null;
    }
}
