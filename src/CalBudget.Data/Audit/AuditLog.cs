using System.Data.Common;
using System.Globalization;
using System.Runtime.CompilerServices;
using System.Security.Cryptography;
using System.Text;
using Dapper;

namespace CalBudget.Data.Audit;

/// <summary>One entry of the audit trail.</summary>
/// <param name="Seq">Its position (1, 2, ...).</param>
/// <param name="At">When (UTC).</param>
/// <param name="Actor">Who: the key's or user's name, or "command line".</param>
/// <param name="Action">What: "create", "update", "retire", "upload", "revoke", "approve" ...</param>
/// <param name="EntityType">The kind of entity: "instrument", "reference", "calibration", "readings", "key", "budget" ...</param>
/// <param name="EntityId">Its id ("12", "12/3" for a budget version, a key's name).</param>
/// <param name="Reason">Why, when the action takes a reason.</param>
/// <param name="State">The entity's new state as JSON.</param>
/// <param name="StateSha256">SHA-256 of <paramref name="State"/> (UTF-8), lowercase hex.</param>
/// <param name="PreviousSha256">The previous entry's hash (64 zeros for the first).</param>
/// <param name="EntrySha256">This entry's hash.</param>
public sealed record AuditEntry(long Seq, DateTimeOffset At, string Actor, string Action, string EntityType, string EntityId, string? Reason,
    string State, string StateSha256, string PreviousSha256, string EntrySha256);

/// <summary>What a verification found: the entries checked and the first that does not match, with why.</summary>
/// <param name="Entries">Entries read.</param>
/// <param name="Intact">True when every hash matches.</param>
/// <param name="FirstBadSeq">The first entry that does not match.</param>
/// <param name="Problem">What does not match there.</param>
public sealed record AuditVerification(long Entries, bool Intact, long? FirstBadSeq, string? Problem);

/// <summary>
/// The append-only, hash-chained audit trail. entry_sha256 = SHA-256 over the UTF-8 text
/// "previous|seq|at|actor|action|entityType|entityId|reason|stateSha256" (fields as stored, reason empty when null).
/// </summary>
public sealed class AuditLog(IDbConnectionFactory database)
{
    /// <summary>The hash before the first entry.</summary>
    public static readonly string Genesis = new('0', 64);

    private const string Columns = """
        seq, at, actor, action, entity_type AS entityType, entity_id AS entityId, reason, state, state_sha256 AS stateSha256,
        previous_sha256 AS previousSha256, entry_sha256 AS entrySha256
        """;

    /// <summary>Appends an entry inside the writing request's unit of work (the write lock is held, so the chain is serial).</summary>
    public static async Task<AuditEntry> AppendAsync(UnitOfWork work, DateTimeOffset at, string actor, string action, string entityType, string entityId,
        string? reason, string state)
    {
        ArgumentNullException.ThrowIfNull(work);
        ArgumentNullException.ThrowIfNull(state);
        var last = await work.Connection.QuerySingleOrDefaultAsync<(long Seq, string Hash)?>(
            "SELECT seq, entry_sha256 FROM audit_entries ORDER BY seq DESC LIMIT 1", transaction: work.Transaction);
        long seq = (last?.Seq ?? 0) + 1;
        string previous = last?.Hash ?? Genesis;
        string when = Timestamps.Format(at);
        string stateHash = Sha256(state);
        string entryHash = EntryHash(previous, seq, when, actor, action, entityType, entityId, reason, stateHash);
        const string sql = """
            INSERT INTO audit_entries (seq, at, actor, action, entity_type, entity_id, reason, state, state_sha256, previous_sha256, entry_sha256)
            VALUES (@seq, @when, @actor, @action, @entityType, @entityId, @reason, @state, @stateHash, @previous, @entryHash)
            """;
        await work.Connection.ExecuteAsync(sql, new { seq, when, actor, action, entityType, entityId, reason, state, stateHash, previous, entryHash }, work.Transaction);
        return new AuditEntry(seq, Timestamps.Parse(when), actor, action, entityType, entityId, reason, state, stateHash, previous, entryHash);
    }

    /// <summary>A page of entries in order after <paramref name="afterSeq"/>, filtered.</summary>
    public async Task<IReadOnlyList<AuditEntry>> ListAsync(long afterSeq, int limit, string? entityType, string? entityId, string? actor,
        DateTimeOffset? from, DateTimeOffset? to, CancellationToken ct = default)
    {
        string sql = $"""
            SELECT {Columns} FROM audit_entries
            WHERE seq > @afterSeq AND (@entityType IS NULL OR entity_type = @entityType) AND (@entityId IS NULL OR entity_id = @entityId)
              AND (@actor IS NULL OR actor = @actor) AND (@from IS NULL OR at >= @from) AND (@to IS NULL OR at < @to)
            ORDER BY seq LIMIT @limit
            """;
        await using var connection = await database.OpenAsync(ct);
        var rows = await connection.QueryAsync<Row>(new CommandDefinition(sql, new
        {
            afterSeq,
            limit,
            entityType,
            entityId,
            actor,
            from = from is { } f ? Timestamps.Format(f) : null,
            to = to is { } t ? Timestamps.Format(t) : null,
        }, cancellationToken: ct));
        return rows.Select(r => r.ToModel()).ToArray();
    }

    /// <summary>
    /// Recomputes every state hash and the chain, streaming (memory does not grow with the trail), and names the first entry
    /// that does not match.
    /// </summary>
    public async Task<AuditVerification> VerifyAsync(CancellationToken ct = default)
    {
        long count = 0;
        string previous = Genesis;
        long expectedSeq = 1;
        await foreach (var e in StreamAsync(ct))
        {
            count++;
            string? problem = e.Seq != expectedSeq ? $"entry {expectedSeq} is missing"
                : e.PreviousSha256 != previous ? "its link to the previous entry does not match that entry's hash"
                : Sha256(e.State) != e.StateSha256 ? "the stored state does not match its recorded SHA-256"
                : EntryHash(previous, e.Seq, e.At, e.Actor, e.Action, e.EntityType, e.EntityId, e.Reason, e.StateSha256) != e.EntrySha256
                    ? "its fields do not match its hash"
                : null;
            if (problem is not null)
            {
                return new AuditVerification(count, false, Math.Min(e.Seq, expectedSeq), problem);
            }

            previous = e.EntrySha256;
            expectedSeq++;
        }

        return new AuditVerification(count, true, null, null);
    }

    private async IAsyncEnumerable<(long Seq, string At, string Actor, string Action, string EntityType, string EntityId, string? Reason, string State,
        string StateSha256, string PreviousSha256, string EntrySha256)> StreamAsync([EnumeratorCancellation] CancellationToken ct)
    {
        await using var connection = await database.OpenAsync(ct);
        await using DbCommand command = connection.CreateCommand();
        command.CommandText = "SELECT seq, at, actor, action, entity_type, entity_id, reason, state, state_sha256, previous_sha256, entry_sha256 FROM audit_entries ORDER BY seq";
        await using var reader = await command.ExecuteReaderAsync(ct);
        while (await reader.ReadAsync(ct))
        {
            yield return (reader.GetInt64(0), reader.GetString(1), reader.GetString(2), reader.GetString(3), reader.GetString(4), reader.GetString(5),
                reader.IsDBNull(6) ? null : reader.GetString(6), reader.GetString(7), reader.GetString(8), reader.GetString(9), reader.GetString(10));
        }
    }

    /// <summary>SHA-256 of UTF-8 text, lowercase hex.</summary>
    public static string Sha256(string text) => Convert.ToHexStringLower(SHA256.HashData(Encoding.UTF8.GetBytes(text)));

    /// <summary>The chained hash of one entry.</summary>
    public static string EntryHash(string previous, long seq, string at, string actor, string action, string entityType, string entityId, string? reason,
        string stateSha256) =>
        Sha256(string.Join('|', previous, seq.ToString(CultureInfo.InvariantCulture), at, actor, action, entityType, entityId, reason ?? "", stateSha256));

    private sealed record Row(long Seq, string At, string Actor, string Action, string EntityType, string EntityId, string? Reason, string State,
        string StateSha256, string PreviousSha256, string EntrySha256)
    {
        public AuditEntry ToModel() => new(Seq, Timestamps.Parse(At), Actor, Action, EntityType, EntityId, Reason, State, StateSha256, PreviousSha256, EntrySha256);
    }
}
