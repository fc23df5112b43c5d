using System.Data.Common;
using System.Runtime.CompilerServices;
using System.Security.Cryptography;
using Dapper;

namespace CalBudget.Data.Calibrations;

/// <summary>Uploads of readings: the bytes as received, their hash and the parsed table. Append only.</summary>
public sealed class ReadingStore(IDbConnectionFactory database)
{
    private const string UploadColumns = """
        id, run_id AS runId, supersedes_id AS supersedesId, reason, media_type AS mediaType, quantity, byte_count AS byteCount,
        sha256, reading_count AS count, first_at AS firstAt, last_at AS lastAt, uploaded_at AS uploadedAt, uploaded_by AS uploadedBy
        """;

    /// <summary>The newest upload of a run, or null.</summary>
    public static async Task<ReadingUpload?> LatestAsync(UnitOfWork work, long runId)
    {
        ArgumentNullException.ThrowIfNull(work);
        var row = await work.Connection.QuerySingleOrDefaultAsync<Row>(
            $"SELECT {UploadColumns} FROM reading_uploads WHERE run_id = @runId ORDER BY id DESC LIMIT 1", new { runId }, work.Transaction);
        return row?.ToModel();
    }

    /// <summary>Starts a new upload inside <paramref name="work"/>; nothing of it is visible to others until the work commits.</summary>
    public static Task<ReadingUploadWriter> BeginUploadAsync(UnitOfWork work, long runId, long? supersedesId, string? reason, string mediaType,
        string actor, DateTimeOffset now) => ReadingUploadWriter.BeginAsync(work, runId, supersedesId, reason, mediaType, actor, now);

    /// <summary>Every upload of a run, oldest first.</summary>
    public async Task<IReadOnlyList<ReadingUpload>> UploadsAsync(long runId, CancellationToken ct = default)
    {
        await using var connection = await database.OpenAsync(ct);
        var rows = await connection.QueryAsync<Row>(new CommandDefinition(
            $"SELECT {UploadColumns} FROM reading_uploads WHERE run_id = @runId ORDER BY id", new { runId }, cancellationToken: ct));
        return rows.Select(r => r.ToModel()).ToArray();
    }

    /// <summary>One upload of a run, or null (also when it belongs to another run).</summary>
    public async Task<ReadingUpload?> UploadAsync(long runId, long uploadId, CancellationToken ct = default)
    {
        await using var connection = await database.OpenAsync(ct);
        var row = await connection.QuerySingleOrDefaultAsync<Row>(new CommandDefinition(
            $"SELECT {UploadColumns} FROM reading_uploads WHERE id = @uploadId AND run_id = @runId", new { runId, uploadId }, cancellationToken: ct));
        return row?.ToModel();
    }

    /// <summary>The newest upload of a run, or null.</summary>
    public async Task<ReadingUpload?> LatestAsync(long runId, CancellationToken ct = default)
    {
        await using var connection = await database.OpenAsync(ct);
        var row = await connection.QuerySingleOrDefaultAsync<Row>(new CommandDefinition(
            $"SELECT {UploadColumns} FROM reading_uploads WHERE run_id = @runId ORDER BY id DESC LIMIT 1", new { runId }, cancellationToken: ct));
        return row?.ToModel();
    }

    /// <summary>The readings of an upload in order, streamed from the database a block at a time.</summary>
    public async IAsyncEnumerable<Reading> ReadingsAsync(long uploadId, [EnumeratorCancellation] CancellationToken ct = default)
    {
        await using var connection = await database.OpenAsync(ct);
        await using var command = connection.CreateCommand();
        command.CommandText = "SELECT count, at_ticks, fractional_offset, frequency_hz, gate_time_s FROM reading_blocks WHERE upload_id = @uploadId ORDER BY block";
        AddParameter(command, "@uploadId", uploadId);
        await using var reader = await command.ExecuteReaderAsync(ct);
        while (await reader.ReadAsync(ct))
        {
            var block = ReadingBlock.Decode(reader.GetInt32(0), (byte[])reader.GetValue(1), (byte[])reader.GetValue(2),
                reader.IsDBNull(3) ? null : (byte[])reader.GetValue(3), reader.IsDBNull(4) ? null : (byte[])reader.GetValue(4));
            foreach (var reading in block)
            {
                yield return reading;
            }
        }
    }

    /// <summary>The fractional frequency offsets of an upload, in order (what the analytics take).</summary>
    public async Task<double[]> FractionalOffsetsAsync(long uploadId, CancellationToken ct = default)
    {
        var values = new List<double>();
        await foreach (var reading in ReadingsAsync(uploadId, ct))
        {
            values.Add(reading.FractionalOffset);
        }

        return [.. values];
    }

    /// <summary>The bytes of an upload as received, a part at a time (decompressed when stored compressed).</summary>
    public async IAsyncEnumerable<byte[]> ContentAsync(long uploadId, [EnumeratorCancellation] CancellationToken ct = default)
    {
        const string sql = """
            SELECT u.part_encoding, p.bytes FROM reading_upload_parts p JOIN reading_uploads u ON u.id = p.upload_id
            WHERE p.upload_id = @uploadId ORDER BY p.part
            """;
        await using var connection = await database.OpenAsync(ct);
        await using var command = connection.CreateCommand();
        command.CommandText = sql;
        AddParameter(command, "@uploadId", uploadId);
        await using var reader = await command.ExecuteReaderAsync(ct);
        while (await reader.ReadAsync(ct))
        {
            byte[] stored = (byte[])reader.GetValue(1);
            yield return reader.GetString(0) == PartEncoding.Deflate ? PartEncoding.Inflate(stored) : stored;
        }
    }

    internal static void AddParameter(DbCommand command, string name, object? value)
    {
        var p = command.CreateParameter();
        p.ParameterName = name;
        p.Value = value ?? DBNull.Value;
        command.Parameters.Add(p);
    }

    private sealed record Row(long Id, long RunId, long? SupersedesId, string? Reason, string MediaType, string Quantity, long ByteCount, string Sha256,
        long Count, string? FirstAt, string? LastAt, string UploadedAt, string UploadedBy)
    {
        public ReadingUpload ToModel() => new(Id, RunId, SupersedesId, Reason, MediaType, Quantity, ByteCount, Sha256, Count,
            FirstAt is null ? null : Timestamps.Parse(FirstAt), LastAt is null ? null : Timestamps.Parse(LastAt), Timestamps.Parse(UploadedAt), UploadedBy);
    }
}

/// <summary>
/// Writes one upload as it arrives: the bytes in parts of <see cref="PartBytes"/> with their running SHA-256, and the parsed
/// readings in blocks of <see cref="ReadingBlock.Capacity"/>, all in the caller's transaction. Memory use does not grow with the upload.
/// </summary>
public sealed class ReadingUploadWriter : IAsyncDisposable
{
    /// <summary>The size of a stored part of the bytes.</summary>
    public const int PartBytes = 1 << 20;

    private readonly UnitOfWork _work;
    private readonly IncrementalHash _hash = IncrementalHash.CreateHash(HashAlgorithmName.SHA256);
    private readonly byte[] _part = new byte[PartBytes];
    private readonly Reading[] _rows = new Reading[ReadingBlock.Capacity];
    private readonly Queue<(int Part, Task<byte[]> Bytes)> _compressing = new();
    private int _partFill;
    private int _partIndex;
    private int _rowFill;
    private int _blockIndex;
    private long _bytes;
    private long _count;
    private long? _firstTicks;
    private long _lastTicks;

    private ReadingUploadWriter(UnitOfWork work, ReadingUpload pending)
    {
        _work = work;
        Pending = pending;
    }

    /// <summary>The upload as begun (id, run, reason, who and when).</summary>
    public ReadingUpload Pending { get; }

    /// <summary>Readings added so far.</summary>
    public long Count => _count;

    /// <summary>Bytes added so far.</summary>
    public long ByteCount => _bytes;

    internal static async Task<ReadingUploadWriter> BeginAsync(UnitOfWork work, long runId, long? supersedesId, string? reason, string mediaType,
        string actor, DateTimeOffset now)
    {
        ArgumentNullException.ThrowIfNull(work);
        const string sql = """
            INSERT INTO reading_uploads (run_id, supersedes_id, reason, media_type, uploaded_at, uploaded_by)
            VALUES (@runId, @supersedesId, @reason, @mediaType, @now, @actor) RETURNING id
            """;
        long id = await work.Connection.ExecuteScalarAsync<long>(sql,
            new { runId, supersedesId, reason, mediaType, now = Timestamps.Format(now), actor }, work.Transaction);
        return new ReadingUploadWriter(work, new ReadingUpload(id, runId, supersedesId, reason, mediaType, "", 0, "", 0, null, null, now, actor));
    }

    /// <summary>Appends bytes as received.</summary>
    public async ValueTask AppendBytesAsync(ReadOnlyMemory<byte> bytes, CancellationToken ct = default)
    {
        _hash.AppendData(bytes.Span);
        _bytes += bytes.Length;
        while (!bytes.IsEmpty)
        {
            int take = Math.Min(bytes.Length, PartBytes - _partFill);
            bytes.Span[..take].CopyTo(_part.AsSpan(_partFill));
            _partFill += take;
            bytes = bytes[take..];
            if (_partFill == PartBytes)
            {
                await FlushPartAsync(ct);
            }
        }
    }

    /// <summary>Adds the next reading; the caller has checked the order.</summary>
    public ValueTask AddAsync(Reading reading, CancellationToken ct = default)
    {
        _firstTicks ??= reading.AtTicks;
        _lastTicks = reading.AtTicks;
        _rows[_rowFill++] = reading;
        _count++;
        return _rowFill == ReadingBlock.Capacity ? new ValueTask(FlushBlockAsync(ct)) : ValueTask.CompletedTask;
    }

    /// <summary>Writes what is buffered and completes the upload's record with its size, hash, count and span.</summary>
    public async Task<ReadingUpload> CompleteAsync(string quantity, CancellationToken ct = default)
    {
        if (_rowFill > 0)
        {
            await FlushBlockAsync(ct);
        }

        if (_partFill > 0)
        {
            await FlushPartAsync(ct);
        }

        while (_compressing.Count > 0)
        {
            await StorePartAsync(ct);
        }

        string sha = Convert.ToHexStringLower(_hash.GetHashAndReset());
        DateTimeOffset? first = _firstTicks is long f ? ReadingTime.FromTicks(f) : null;
        DateTimeOffset? last = _firstTicks is null ? null : ReadingTime.FromTicks(_lastTicks);
        const string sql = """
            UPDATE reading_uploads SET quantity = @quantity, byte_count = @bytes, sha256 = @sha, reading_count = @count,
                first_at = @first, last_at = @last
            WHERE id = @id
            """;
        await _work.Connection.ExecuteAsync(sql, new
        {
            id = Pending.Id,
            quantity,
            bytes = _bytes,
            sha,
            count = _count,
            first = first is { } a ? Timestamps.Format(a) : null,
            last = last is { } b ? Timestamps.Format(b) : null,
        }, _work.Transaction);
        return Pending with { Quantity = quantity, ByteCount = _bytes, Sha256 = sha, Count = _count, FirstAt = first, LastAt = last };
    }

    /// <inheritdoc />
    public async ValueTask DisposeAsync()
    {
        _hash.Dispose();
        // an abandoned upload may leave compressions running; let them finish so nothing outlives the writer
        foreach (var (_, bytes) in _compressing)
        {
            await ((Task)bytes).ConfigureAwait(ConfigureAwaitOptions.SuppressThrowing);
        }
    }

    // Parts are compressed on the thread pool while parsing goes on (two at most in flight) and stored in order.
    private async Task FlushPartAsync(CancellationToken ct)
    {
        byte[] raw = _part.AsSpan(0, _partFill).ToArray();
        _partFill = 0;
        _compressing.Enqueue((_partIndex++, Task.Run(() => PartEncoding.CompressPart(raw), ct)));
        if (_compressing.Count > 2)
        {
            await StorePartAsync(ct);
        }
    }

    private async Task StorePartAsync(CancellationToken ct)
    {
        var (part, compressing) = _compressing.Dequeue();
        byte[] bytes = await compressing;
        await using var command = _work.Connection.CreateCommand();
        command.Transaction = _work.Transaction;
        command.CommandText = "INSERT INTO reading_upload_parts (upload_id, part, bytes) VALUES (@id, @part, @bytes)";
        ReadingStore.AddParameter(command, "@id", Pending.Id);
        ReadingStore.AddParameter(command, "@part", part);
        ReadingStore.AddParameter(command, "@bytes", bytes);
        await command.ExecuteNonQueryAsync(ct);
    }

    private async Task FlushBlockAsync(CancellationToken ct)
    {
        var (ticks, offsets, frequencies, gates) = ReadingBlock.Encode(_rows.AsSpan(0, _rowFill));
        await using var command = _work.Connection.CreateCommand();
        command.Transaction = _work.Transaction;
        command.CommandText = """
            INSERT INTO reading_blocks (upload_id, block, first_seq, count, at_ticks, fractional_offset, frequency_hz, gate_time_s)
            VALUES (@id, @block, @first, @count, @ticks, @offsets, @frequencies, @gates)
            """;
        ReadingStore.AddParameter(command, "@id", Pending.Id);
        ReadingStore.AddParameter(command, "@block", _blockIndex++);
        ReadingStore.AddParameter(command, "@first", _count - _rowFill);
        ReadingStore.AddParameter(command, "@count", _rowFill);
        ReadingStore.AddParameter(command, "@ticks", ticks);
        ReadingStore.AddParameter(command, "@offsets", offsets);
        ReadingStore.AddParameter(command, "@frequencies", frequencies);
        ReadingStore.AddParameter(command, "@gates", gates);
        await command.ExecuteNonQueryAsync(ct);
        _rowFill = 0;
    }
}
