using System.Data.Common;
using Dapper;

namespace CalBudget.Data.Calibrations;

/// <summary>Calibration runs (the readings are <see cref="ReadingStore"/>'s).</summary>
public sealed class CalibrationRunStore(IDbConnectionFactory database)
{
    private const string Select = """
        SELECT r.id, r.instrument_id AS instrumentId, r.reference_id AS referenceId, r.comparator, r.comparator_resolution AS comparatorResolution,
            r.gate_time_s AS gateTimeSeconds, r.posture_name AS postureName, r.up_x AS upX, r.up_y AS upY, r.up_z AS upZ,
            r.temperature_c AS temperatureCelsius, r.temperature_variation_k AS temperatureVariationKelvin,
            r.relative_humidity_percent AS relativeHumidityPercent, r.supply, r.warm_up_minutes AS warmUpMinutes,
            r.comparator_systematic AS comparatorSystematic, r.condition, r.operator, r.started_at AS startedAt,
            r.ended_at AS endedAt, r.notes, r.retired_at AS retiredAt, r.retired_reason AS retiredReason, r.version,
            r.created_at AS createdAt, r.created_by AS createdBy, r.updated_at AS updatedAt, r.updated_by AS updatedBy,
            i.asset_number AS instrumentAssetNumber, s.identity AS referenceIdentity,
            u.id AS uploadId, u.reading_count AS readingCount, u.sha256,
            (SELECT count(*) FROM reading_uploads c WHERE c.run_id = r.id) AS uploads
        FROM calibration_runs r
        JOIN instruments i ON i.id = r.instrument_id
        JOIN reference_standards s ON s.id = r.reference_id
        LEFT JOIN reading_uploads u ON u.id = (SELECT max(l.id) FROM reading_uploads l WHERE l.run_id = r.id)
        """;

    private const string InsertSql = """
        INSERT INTO calibration_runs (instrument_id, reference_id, comparator, comparator_resolution, gate_time_s, posture_name,
            up_x, up_y, up_z, temperature_c, temperature_variation_k, relative_humidity_percent, supply, condition, operator,
            started_at, ended_at, notes, warm_up_minutes, comparator_systematic, version, created_at, created_by, updated_at, updated_by)
        VALUES (@InstrumentId, @ReferenceId, @Comparator, @ComparatorResolution, @GateTimeSeconds, @PostureName, @UpX, @UpY, @UpZ,
            @TemperatureCelsius, @TemperatureVariationKelvin, @RelativeHumidityPercent, @Supply, @Condition, @actor, @startedAt,
            @endedAt, @Notes, @WarmUpMinutes, @ComparatorSystematic, 1, @now, @actor, @now, @actor)
        RETURNING id
        """;

    private const string UpdateSql = """
        UPDATE calibration_runs SET instrument_id = @InstrumentId, reference_id = @ReferenceId, comparator = @Comparator,
            comparator_resolution = @ComparatorResolution, gate_time_s = @GateTimeSeconds, posture_name = @PostureName,
            up_x = @UpX, up_y = @UpY, up_z = @UpZ, temperature_c = @TemperatureCelsius,
            temperature_variation_k = @TemperatureVariationKelvin, relative_humidity_percent = @RelativeHumidityPercent,
            supply = @Supply, condition = @Condition, started_at = @startedAt, ended_at = @endedAt, notes = @Notes,
            warm_up_minutes = @WarmUpMinutes, comparator_systematic = @ComparatorSystematic,
            version = version + 1, updated_at = @now, updated_by = @actor
        WHERE id = @id AND version = @expectedVersion AND retired_at IS NULL
        """;

    private const string RetireSql = """
        UPDATE calibration_runs SET retired_at = @now, retired_reason = @reason, version = version + 1, updated_at = @now, updated_by = @actor
        WHERE id = @id AND version = @expectedVersion AND retired_at IS NULL
        """;

    // what every page statement adds after its own filter
    private const string PageRest = "AND (@condition IS NULL OR r.condition = @condition) AND (@includeRetired = 1 OR r.retired_at IS NULL) ORDER BY r.id LIMIT @take";

    internal const string PageSql = $"""
        {Select}
        WHERE r.id > @after AND (@instrumentId IS NULL OR r.instrument_id = @instrumentId)
          AND (@referenceId IS NULL OR r.reference_id = @referenceId) {PageRest}
        """;

    // With an instrument, the (instrument_id, id) index serves the page: "(@x IS NULL OR col = @x)" keeps SQLite's planner
    // off an index, which scanned ever more rows as the runs grew (mixed load, README). The same for a reference.
    internal const string PageByInstrumentSql = $"""
        {Select}
        WHERE r.instrument_id = @instrumentId AND r.id > @after AND (@referenceId IS NULL OR r.reference_id = @referenceId) {PageRest}
        """;

    internal const string PageByReferenceSql = $"""
        {Select}
        WHERE r.reference_id = @referenceId AND r.id > @after {PageRest}
        """;

    private const string RecentSql = $"""
        {Select}
        WHERE r.instrument_id = @instrumentId AND r.retired_at IS NULL
        ORDER BY r.id DESC LIMIT @take
        """;

    /// <summary>Records a run; the caller has checked the instrument and reference.</summary>
    public static async Task<CalibrationRun> CreateAsync(UnitOfWork work, CalibrationRunFields fields, string actor, DateTimeOffset now)
    {
        ArgumentNullException.ThrowIfNull(work);
        long id = await work.Connection.ExecuteScalarAsync<long>(InsertSql, Parameters(fields, actor, now), work.Transaction);
        return (await GetAsync(work.Connection, id, work.Transaction))!;
    }

    /// <summary>Replaces the run's record when the version matches and it is not retired; false otherwise. The operator stays.</summary>
    public static async Task<bool> UpdateAsync(UnitOfWork work, long id, long expectedVersion, CalibrationRunFields fields, string actor, DateTimeOffset now)
    {
        ArgumentNullException.ThrowIfNull(work);
        var p = Parameters(fields, actor, now);
        p.Add("id", id);
        p.Add("expectedVersion", expectedVersion);
        return await work.Connection.ExecuteAsync(UpdateSql, p, work.Transaction) == 1;
    }

    /// <summary>Retires when the version matches.</summary>
    public static async Task<bool> RetireAsync(UnitOfWork work, long id, long expectedVersion, string reason, string actor, DateTimeOffset now)
    {
        ArgumentNullException.ThrowIfNull(work);
        return await work.Connection.ExecuteAsync(RetireSql, new { id, expectedVersion, reason, actor, now = Timestamps.Format(now) }, work.Transaction) == 1;
    }

    /// <summary>The run, or null.</summary>
    public async Task<CalibrationRun?> GetAsync(long id, CancellationToken ct = default)
    {
        await using var connection = await database.OpenAsync(ct);
        return await GetAsync(connection, id, null);
    }

    /// <summary>Within a unit of work.</summary>
    public static Task<CalibrationRun?> GetAsync(UnitOfWork work, long id)
    {
        ArgumentNullException.ThrowIfNull(work);
        return GetAsync(work.Connection, id, work.Transaction);
    }

    /// <summary>A page in id order after <paramref name="afterId"/>, filtered.</summary>
    public async Task<IReadOnlyList<CalibrationRun>> ListAsync(long afterId, int limit, long? instrumentId, long? referenceId, string? condition,
        bool includeRetired, CancellationToken ct = default)
    {
        await using var connection = await database.OpenAsync(ct);
        var rows = await connection.QueryAsync<Row>(new CommandDefinition(instrumentId is not null ? PageByInstrumentSql : referenceId is not null ? PageByReferenceSql : PageSql,
            new { after = afterId, take = limit, instrumentId, referenceId, condition, includeRetired = includeRetired ? 1 : 0 }, cancellationToken: ct));
        return rows.Select(r => r.ToModel()).ToArray();
    }

    /// <summary>The newest runs of an instrument (not retired), newest first.</summary>
    public async Task<IReadOnlyList<CalibrationRun>> RecentAsync(long instrumentId, int take, CancellationToken ct = default)
    {
        await using var connection = await database.OpenAsync(ct);
        var rows = await connection.QueryAsync<Row>(new CommandDefinition(RecentSql, new { instrumentId, take }, cancellationToken: ct));
        return rows.Select(r => r.ToModel()).ToArray();
    }

    /// <summary>The instrument's active runs that started after <paramref name="after"/>, oldest first.</summary>
    public static async Task<IReadOnlyList<CalibrationRun>> LaterAsync(UnitOfWork work, long instrumentId, DateTimeOffset after)
    {
        ArgumentNullException.ThrowIfNull(work);
        var rows = await work.Connection.QueryAsync<Row>(
            $"{Select} WHERE r.instrument_id = @instrumentId AND r.retired_at IS NULL AND r.started_at > @after ORDER BY r.started_at, r.id",
            new { instrumentId, after = Timestamps.Format(after) }, work.Transaction);
        return rows.Select(r => r.ToModel()).ToArray();
    }

    private static async Task<CalibrationRun?> GetAsync(DbConnection connection, long id, DbTransaction? tx) =>
        (await connection.QuerySingleOrDefaultAsync<Row>($"{Select} WHERE r.id = @id", new { id }, tx))?.ToModel();

    private static DynamicParameters Parameters(CalibrationRunFields f, string actor, DateTimeOffset now)
    {
        ArgumentNullException.ThrowIfNull(f);
        var p = new DynamicParameters(new
        {
            f.InstrumentId,
            f.ReferenceId,
            f.Comparator,
            f.ComparatorResolution,
            f.GateTimeSeconds,
            f.PostureName,
            f.UpX,
            f.UpY,
            f.UpZ,
            f.Environment.TemperatureCelsius,
            f.Environment.TemperatureVariationKelvin,
            f.Environment.RelativeHumidityPercent,
            f.Environment.Supply,
            f.Condition,
            f.Notes,
            f.WarmUpMinutes,
            f.ComparatorSystematic,
        });
        p.Add("startedAt", Timestamps.Format(f.StartedAt));
        p.Add("endedAt", f.EndedAt is { } end ? Timestamps.Format(end) : null);
        p.Add("now", Timestamps.Format(now));
        p.Add("actor", actor);
        return p;
    }

    private sealed class Row
    {
        public long Id { get; init; }
        public long InstrumentId { get; init; }
        public long ReferenceId { get; init; }
        public string Comparator { get; init; } = "";
        public double ComparatorResolution { get; init; }
        public double GateTimeSeconds { get; init; }
        public string? PostureName { get; init; }
        public double UpX { get; init; }
        public double UpY { get; init; }
        public double UpZ { get; init; }
        public double? TemperatureCelsius { get; init; }
        public double? TemperatureVariationKelvin { get; init; }
        public double? RelativeHumidityPercent { get; init; }
        public string Supply { get; init; } = "";
        public double? WarmUpMinutes { get; init; }
        public double? ComparatorSystematic { get; init; }
        public string Condition { get; init; } = "";
        public string Operator { get; init; } = "";
        public string StartedAt { get; init; } = "";
        public string? EndedAt { get; init; }
        public string Notes { get; init; } = "";
        public string? RetiredAt { get; init; }
        public string? RetiredReason { get; init; }
        public long Version { get; init; }
        public string CreatedAt { get; init; } = "";
        public string CreatedBy { get; init; } = "";
        public string UpdatedAt { get; init; } = "";
        public string UpdatedBy { get; init; } = "";
        public string InstrumentAssetNumber { get; init; } = "";
        public string ReferenceIdentity { get; init; } = "";
        public long? UploadId { get; init; }
        public long? ReadingCount { get; init; }
        public string? Sha256 { get; init; }
        public long Uploads { get; init; }

        public CalibrationRun ToModel() => new(Id,
            new CalibrationRunFields(InstrumentId, ReferenceId, Comparator, ComparatorResolution, GateTimeSeconds, PostureName, UpX, UpY, UpZ,
                new RunEnvironment(TemperatureCelsius, TemperatureVariationKelvin, RelativeHumidityPercent, Supply), Condition,
                Timestamps.Parse(StartedAt), EndedAt is null ? null : Timestamps.Parse(EndedAt), Notes, WarmUpMinutes, ComparatorSystematic),
            Operator, InstrumentAssetNumber, ReferenceIdentity,
            UploadId is long upload ? new ReadingsSummary(upload, ReadingCount ?? 0, Sha256 ?? "", Uploads) : null,
            Version, RetiredAt is null ? null : Timestamps.Parse(RetiredAt), RetiredReason, Timestamps.Parse(CreatedAt), CreatedBy,
            Timestamps.Parse(UpdatedAt), UpdatedBy);
    }
}
