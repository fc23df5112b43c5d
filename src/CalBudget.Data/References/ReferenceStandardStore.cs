using Dapper;

namespace CalBudget.Data.References;

/// <summary>Reference standards: one row each, updated in place under optimistic versioning.</summary>
public sealed class ReferenceStandardStore(IDbConnectionFactory database)
{
    private const string Columns = """
        id, identity, kind, description, nominal_frequency_hz AS nominalFrequencyHz, certificate_number AS certificateNumber,
        issuing_lab AS issuingLab, calibration_date AS calibrationDate, fractional_offset AS fractionalOffset,
        expanded_uncertainty AS expandedUncertainty, coverage_factor AS coverageFactor, drift_per_day AS driftPerDay,
        drift_uncertainty_per_day AS driftUncertaintyPerDay, due_date AS dueDate, retired_at AS retiredAt,
        retired_reason AS retiredReason, version, created_at AS createdAt, created_by AS createdBy,
        updated_at AS updatedAt, updated_by AS updatedBy
        """;

    private const string InsertSql = """
        INSERT INTO reference_standards (identity, kind, description, nominal_frequency_hz, certificate_number, issuing_lab,
            calibration_date, fractional_offset, expanded_uncertainty, coverage_factor, drift_per_day, drift_uncertainty_per_day,
            due_date, version, created_at, created_by, updated_at, updated_by)
        VALUES (@Identity, @Kind, @Description, @NominalFrequencyHz, @CertificateNumber, @IssuingLab, @CalibrationDate,
            @FractionalOffset, @ExpandedUncertainty, @CoverageFactor, @DriftPerDay, @DriftUncertaintyPerDay, @DueDate, 1,
            @now, @actor, @now, @actor)
        RETURNING id
        """;

    /// <summary>True when another reference already has <paramref name="identity"/> (other than <paramref name="exceptId"/>).</summary>
    public static async Task<bool> IdentityTakenAsync(UnitOfWork work, string identity, long exceptId = 0)
    {
        ArgumentNullException.ThrowIfNull(work);
        return await work.Connection.ExecuteScalarAsync<long>(
            "SELECT count(*) FROM reference_standards WHERE identity = @identity AND id <> @exceptId", new { identity, exceptId }, work.Transaction) > 0;
    }

    /// <summary>Records a new reference; the caller has checked the identity is free.</summary>
    public static async Task<ReferenceStandard> CreateAsync(UnitOfWork work, ReferenceStandardFields fields, string actor, DateTimeOffset now)
    {
        ArgumentNullException.ThrowIfNull(work);
        ArgumentNullException.ThrowIfNull(fields);
        long id = await work.Connection.ExecuteScalarAsync<long>(InsertSql, Parameters(fields, actor, now), work.Transaction);
        return (await GetAsync(work.Connection, id, work.Transaction))!;
    }

    private const string UpdateSql = """
        UPDATE reference_standards SET identity = @Identity, kind = @Kind, description = @Description,
            nominal_frequency_hz = @NominalFrequencyHz, certificate_number = @CertificateNumber, issuing_lab = @IssuingLab,
            calibration_date = @CalibrationDate, fractional_offset = @FractionalOffset, expanded_uncertainty = @ExpandedUncertainty,
            coverage_factor = @CoverageFactor, drift_per_day = @DriftPerDay, drift_uncertainty_per_day = @DriftUncertaintyPerDay,
            due_date = @DueDate, version = version + 1, updated_at = @now, updated_by = @actor
        WHERE id = @id AND version = @expectedVersion AND retired_at IS NULL
        """;

    /// <summary>Updates when the stored version is <paramref name="expectedVersion"/>; false when it is not (a stale If-Match).</summary>
    public static async Task<bool> UpdateAsync(UnitOfWork work, long id, long expectedVersion, ReferenceStandardFields fields, string actor, DateTimeOffset now)
    {
        ArgumentNullException.ThrowIfNull(work);
        ArgumentNullException.ThrowIfNull(fields);
        var p = Parameters(fields, actor, now);
        p.Add("id", id);
        p.Add("expectedVersion", expectedVersion);
        return await work.Connection.ExecuteAsync(UpdateSql, p, work.Transaction) == 1;
    }

    private const string RetireSql = """
        UPDATE reference_standards SET retired_at = @now, retired_reason = @reason, version = version + 1, updated_at = @now, updated_by = @actor
        WHERE id = @id AND version = @expectedVersion AND retired_at IS NULL
        """;

    /// <summary>Retires when the stored version is <paramref name="expectedVersion"/> and it is not retired already.</summary>
    public static async Task<bool> RetireAsync(UnitOfWork work, long id, long expectedVersion, string reason, string actor, DateTimeOffset now)
    {
        ArgumentNullException.ThrowIfNull(work);
        return await work.Connection.ExecuteAsync(RetireSql, new { id, expectedVersion, reason, actor, now = Timestamps.Format(now) }, work.Transaction) == 1;
    }

    /// <summary>The reference with <paramref name="id"/>, or null.</summary>
    public async Task<ReferenceStandard?> GetAsync(long id, CancellationToken ct = default)
    {
        await using var connection = await database.OpenAsync(ct);
        return await GetAsync(connection, id, null);
    }

    /// <summary>Within a unit of work.</summary>
    public static Task<ReferenceStandard?> GetAsync(UnitOfWork work, long id)
    {
        ArgumentNullException.ThrowIfNull(work);
        return GetAsync(work.Connection, id, work.Transaction);
    }

    private static async Task<ReferenceStandard?> GetAsync(System.Data.Common.DbConnection connection, long id, System.Data.Common.DbTransaction? tx)
    {
        var row = await connection.QuerySingleOrDefaultAsync<Row>($"SELECT {Columns} FROM reference_standards WHERE id = @id", new { id }, tx);
        return row?.ToModel();
    }

    private const string PageSql = $"""
        SELECT {Columns} FROM reference_standards
        WHERE id > @after AND (@kind IS NULL OR kind = @kind) AND (@includeRetired = 1 OR retired_at IS NULL)
          AND (@text IS NULL OR identity LIKE @text ESCAPE '\' OR description LIKE @text ESCAPE '\' OR certificate_number LIKE @text ESCAPE '\')
        ORDER BY id LIMIT @take
        """;

    /// <summary>A page in id order after <paramref name="afterId"/>; the next page starts after the last id returned.</summary>
    public async Task<IReadOnlyList<ReferenceStandard>> ListAsync(long afterId, int limit, string? kind, string? text, bool includeRetired, CancellationToken ct = default)
    {
        await using var connection = await database.OpenAsync(ct);
        string? like = Sql.ContainsPattern(text);
        var rows = await connection.QueryAsync<Row>(new CommandDefinition(PageSql,
            new { after = afterId, take = limit, kind, text = like, includeRetired = includeRetired ? 1 : 0 }, cancellationToken: ct));
        return rows.Select(r => r.ToModel()).ToArray();
    }

    private static DynamicParameters Parameters(ReferenceStandardFields f, string actor, DateTimeOffset now)
    {
        var p = new DynamicParameters(new
        {
            f.Identity,
            f.Kind,
            f.Description,
            f.NominalFrequencyHz,
            f.CertificateNumber,
            f.IssuingLab,
            CalibrationDate = Timestamps.Format(f.CalibrationDate),
            f.FractionalOffset,
            f.ExpandedUncertainty,
            f.CoverageFactor,
            f.DriftPerDay,
            f.DriftUncertaintyPerDay,
            DueDate = Timestamps.Format(f.DueDate),
        });
        p.Add("now", Timestamps.Format(now));
        p.Add("actor", actor);
        return p;
    }

    private sealed record Row(long Id, string Identity, string Kind, string Description, double NominalFrequencyHz, string CertificateNumber,
        string IssuingLab, string CalibrationDate, double FractionalOffset, double ExpandedUncertainty, double CoverageFactor, double DriftPerDay,
        double DriftUncertaintyPerDay, string DueDate, string? RetiredAt, string? RetiredReason, long Version, string CreatedAt, string CreatedBy,
        string UpdatedAt, string UpdatedBy)
    {
        public ReferenceStandard ToModel() => new(Id,
            new ReferenceStandardFields(Identity, Kind, Description, NominalFrequencyHz, CertificateNumber, IssuingLab, Timestamps.Parse(CalibrationDate),
                FractionalOffset, ExpandedUncertainty, CoverageFactor, DriftPerDay, DriftUncertaintyPerDay, Timestamps.Parse(DueDate)),
            Version, RetiredAt is null ? null : Timestamps.Parse(RetiredAt), RetiredReason, Timestamps.Parse(CreatedAt), CreatedBy,
            Timestamps.Parse(UpdatedAt), UpdatedBy);
    }
}
