using System.Data.Common;
using System.Globalization;
using System.Security.Cryptography;
using System.Text;
using Dapper;
using Microsoft.Data.Sqlite;
using SQLitePCL;

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

    private const string OtherFilters = "(@from IS NULL OR at >= @from) AND (@to IS NULL OR at < @to)";

    internal const string PageSql = $"""
        SELECT {Columns} FROM audit_entries
        WHERE seq > @afterSeq AND (@entityType IS NULL OR entity_type = @entityType) AND (@entityId IS NULL OR entity_id = @entityId)
          AND (@actor IS NULL OR actor = @actor) AND {OtherFilters}
        ORDER BY seq LIMIT @limit
        """;

    // An auditor's usual questions, one record's history and one person's actions, each served by its index (an
    // "@x IS NULL OR" filter would keep SQLite's planner off it and scan the whole trail).
    internal const string PageByEntitySql = $"""
        SELECT {Columns} FROM audit_entries
        WHERE entity_type = @entityType AND entity_id = @entityId AND seq > @afterSeq AND (@actor IS NULL OR actor = @actor) AND {OtherFilters}
        ORDER BY seq LIMIT @limit
        """;

    internal const string PageByActorSql = $"""
        SELECT {Columns} FROM audit_entries
        WHERE actor = @actor AND seq > @afterSeq AND (@entityType IS NULL OR entity_type = @entityType) AND {OtherFilters}
        ORDER BY seq LIMIT @limit
        """;

    /// <summary>A page of entries in order after <paramref name="afterSeq"/>, filtered.</summary>
    public async Task<IReadOnlyList<AuditEntry>> ListAsync(long afterSeq, int limit, string? entityType, string? entityId, string? actor,
        DateTimeOffset? from, DateTimeOffset? to, CancellationToken ct = default)
    {
        string sql = entityType is not null && entityId is not null ? PageByEntitySql
            : actor is not null && entityId is null ? PageByActorSql
            : PageSql;
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
    /// that does not match. The stored UTF-8 bytes are hashed where SQLite holds them (no text is decoded), which keeps a
    /// million entries to a few seconds.
    /// </summary>
    public async Task<AuditVerification> VerifyAsync(CancellationToken ct = default)
    {
        await using var connection = await database.OpenAsync(ct);
        var handle = ((SqliteConnection)connection).Handle ?? throw new InvalidOperationException("the connection is not open");
        return await Task.Run(() => Verify(handle, ct), ct);
    }

    private static AuditVerification Verify(sqlite3 handle, CancellationToken ct)
    {
        const string sql = "SELECT seq, at, actor, action, entity_type, entity_id, reason, state, state_sha256, previous_sha256, entry_sha256 FROM audit_entries ORDER BY seq";
        if (raw.sqlite3_prepare_v2(handle, sql, out sqlite3_stmt statement) != raw.SQLITE_OK)
        {
            throw new InvalidOperationException("could not read the audit trail: " + raw.sqlite3_errmsg(handle).utf8_to_string());
        }

        using (statement)
        {
            var chain = new ChainCheck();
            int step;
            while ((step = raw.sqlite3_step(statement)) == raw.SQLITE_ROW)
            {
                if ((chain.Count & 4095) == 0)
                {
                    ct.ThrowIfCancellationRequested();
                }

                long seq = raw.sqlite3_column_int64(statement, 0);
                string? problem = chain.Check(seq, raw.sqlite3_column_blob(statement, 1), raw.sqlite3_column_blob(statement, 2),
                    raw.sqlite3_column_blob(statement, 3), raw.sqlite3_column_blob(statement, 4), raw.sqlite3_column_blob(statement, 5),
                    raw.sqlite3_column_blob(statement, 6), raw.sqlite3_column_blob(statement, 7), raw.sqlite3_column_blob(statement, 8),
                    raw.sqlite3_column_blob(statement, 9), raw.sqlite3_column_blob(statement, 10));
                if (problem is not null)
                {
                    return new AuditVerification(chain.Count, false, Math.Min(seq, chain.ExpectedSeq), problem);
                }
            }

            if (step != raw.SQLITE_DONE)
            {
                throw new InvalidOperationException("could not read the audit trail: " + raw.sqlite3_errmsg(handle).utf8_to_string());
            }

            return new AuditVerification(chain.Count, true, null, null);
        }
    }

    /// <summary>
    /// The check of one entry after another over their stored UTF-8 bytes: sequence, link, state hash, entry hash (the same
    /// text as <see cref="EntryHash"/>, built in a reused buffer).
    /// </summary>
    private sealed class ChainCheck
    {
        private readonly byte[] _previous = Encoding.ASCII.GetBytes(Genesis);
        private byte[] _text = new byte[1024];

        public long Count { get; private set; }

        public long ExpectedSeq { get; private set; } = 1;

        public string? Check(long seq, ReadOnlySpan<byte> at, ReadOnlySpan<byte> actor, ReadOnlySpan<byte> action, ReadOnlySpan<byte> entityType,
            ReadOnlySpan<byte> entityId, ReadOnlySpan<byte> reason, ReadOnlySpan<byte> state, ReadOnlySpan<byte> stateSha256,
            ReadOnlySpan<byte> previousSha256, ReadOnlySpan<byte> entrySha256)
        {
            Count++;
            if (seq != ExpectedSeq)
            {
                return $"entry {ExpectedSeq} is missing";
            }

            if (!previousSha256.SequenceEqual(_previous))
            {
                return "its link to the previous entry does not match that entry's hash";
            }

            Span<byte> hex = stackalloc byte[64];
            HashHex(state, hex);
            if (!hex.SequenceEqual(stateSha256))
            {
                return "the stored state does not match its recorded SHA-256";
            }

            int length = 64 + 20 + at.Length + actor.Length + action.Length + entityType.Length + entityId.Length + reason.Length + 64 + 8;
            if (_text.Length < length)
            {
                _text = new byte[Math.Max(length, _text.Length * 2)];
            }

            var text = _text.AsSpan();
            int n = 0;
            Put(text, ref n, previousSha256);
            seq.TryFormat(text[n..], out int digits, default, CultureInfo.InvariantCulture);
            n += digits;
            text[n++] = (byte)'|';
            Put(text, ref n, at);
            Put(text, ref n, actor);
            Put(text, ref n, action);
            Put(text, ref n, entityType);
            Put(text, ref n, entityId);
            Put(text, ref n, reason);
            stateSha256.CopyTo(text[n..]);
            n += stateSha256.Length;
            HashHex(text[..n], hex);
            if (!hex.SequenceEqual(entrySha256))
            {
                return "its fields do not match its hash";
            }

            entrySha256.CopyTo(_previous);
            ExpectedSeq++;
            return null;
        }

        private static void Put(Span<byte> text, ref int n, ReadOnlySpan<byte> field)
        {
            field.CopyTo(text[n..]);
            n += field.Length;
            text[n++] = (byte)'|';
        }

        private static void HashHex(ReadOnlySpan<byte> data, Span<byte> hex)
        {
            Span<byte> hash = stackalloc byte[32];
            SHA256.HashData(data, hash);
            const string Digits = "0123456789abcdef";
            for (int i = 0; i < 32; i++)
            {
                hex[2 * i] = (byte)Digits[hash[i] >> 4];
                hex[(2 * i) + 1] = (byte)Digits[hash[i] & 15];
            }
        }
    }

    /// <summary>SHA-256 of UTF-8 text, lowercase hex.</summary>
    public static string Sha256(string text)
    {
        ArgumentNullException.ThrowIfNull(text);
        int length = Encoding.UTF8.GetMaxByteCount(text.Length);
        byte[]? rented = length > 1024 ? System.Buffers.ArrayPool<byte>.Shared.Rent(length) : null;
        Span<byte> bytes = rented ?? stackalloc byte[1024];
        try
        {
            int written = Encoding.UTF8.GetBytes(text, bytes);
            Span<byte> hash = stackalloc byte[32];
            SHA256.HashData(bytes[..written], hash);
            return Convert.ToHexStringLower(hash);
        }
        finally
        {
            if (rented is not null)
            {
                System.Buffers.ArrayPool<byte>.Shared.Return(rented);
            }
        }
    }

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
