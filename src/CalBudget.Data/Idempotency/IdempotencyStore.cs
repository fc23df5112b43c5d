using Dapper;

namespace CalBudget.Data.Idempotency;

/// <summary>A stored answer to a creating request.</summary>
/// <param name="RequestHash">SHA-256 of the request as received.</param>
/// <param name="StatusCode">The answer's status.</param>
/// <param name="Location">Its Location header, if any.</param>
/// <param name="ResponseBody">Its JSON body.</param>
public sealed record IdempotencyRecord(byte[] RequestHash, long StatusCode, string? Location, string ResponseBody);

/// <summary>
/// Idempotency-Key records, per actor: the first answer to a creating POST is kept in the same transaction as the
/// creation, so a replay either finds both or neither.
/// </summary>
public static class IdempotencyStore
{
    private const string FindSql = """
        SELECT request_hash AS requestHash, status_code AS statusCode, location, response_body AS responseBody
        FROM idempotency_records WHERE actor = @actor AND idempotency_key = @key AND operation = @operation
        """;

    private const string InsertSql = """
        INSERT INTO idempotency_records (actor, idempotency_key, operation, request_hash, status_code, location, response_body, created_at)
        VALUES (@actor, @key, @operation, @hash, @status, @location, @body, @createdAt)
        """;

    /// <summary>The earlier answer for (<paramref name="actor"/>, <paramref name="key"/>, <paramref name="operation"/>), if any.</summary>
    public static Task<IdempotencyRecord?> FindAsync(UnitOfWork work, string actor, string key, string operation)
    {
        ArgumentNullException.ThrowIfNull(work);
        return work.Connection.QuerySingleOrDefaultAsync<IdempotencyRecord>(FindSql, new { actor, key, operation }, work.Transaction);
    }

    /// <summary>Keeps the answer, in the request's own transaction.</summary>
    public static Task SaveAsync(UnitOfWork work, string actor, string key, string operation, IdempotencyRecord record, DateTimeOffset now)
    {
        ArgumentNullException.ThrowIfNull(work);
        ArgumentNullException.ThrowIfNull(record);
        return work.Connection.ExecuteAsync(InsertSql, new
        {
            actor,
            key,
            operation,
            hash = record.RequestHash,
            status = record.StatusCode,
            location = record.Location,
            body = record.ResponseBody,
            createdAt = Timestamps.Format(now),
        }, work.Transaction);
    }
}
