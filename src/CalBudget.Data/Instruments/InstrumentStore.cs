using System.Data.Common;
using Dapper;

namespace CalBudget.Data.Instruments;

/// <summary>Instruments and their postures.</summary>
public sealed class InstrumentStore(IDbConnectionFactory database)
{
    private const string Columns = """
        id, asset_number AS assetNumber, customer, manufacturer, model, serial_number AS serialNumber, description,
        oscillator_kind AS oscillatorKind, nominal_frequency_hz AS nominalFrequencyHz, specification, retired_at AS retiredAt,
        retired_reason AS retiredReason, version, created_at AS createdAt, created_by AS createdBy, updated_at AS updatedAt, updated_by AS updatedBy
        """;

    private const string InsertSql = """
        INSERT INTO instruments (asset_number, customer, manufacturer, model, serial_number, description, oscillator_kind,
            nominal_frequency_hz, specification, version, created_at, created_by, updated_at, updated_by)
        VALUES (@AssetNumber, @Customer, @Manufacturer, @Model, @SerialNumber, @Description, @OscillatorKind, @NominalFrequencyHz,
            @SpecificationJson, 1, @now, @actor, @now, @actor)
        RETURNING id
        """;

    private const string UpdateSql = """
        UPDATE instruments SET asset_number = @AssetNumber, customer = @Customer, manufacturer = @Manufacturer, model = @Model,
            serial_number = @SerialNumber, description = @Description, oscillator_kind = @OscillatorKind,
            nominal_frequency_hz = @NominalFrequencyHz, specification = @SpecificationJson, version = version + 1,
            updated_at = @now, updated_by = @actor
        WHERE id = @id AND version = @expectedVersion AND retired_at IS NULL
        """;

    private const string RetireSql = """
        UPDATE instruments SET retired_at = @now, retired_reason = @reason, version = version + 1, updated_at = @now, updated_by = @actor
        WHERE id = @id AND version = @expectedVersion AND retired_at IS NULL
        """;

    private const string InsertPostureSql = "INSERT INTO instrument_postures (instrument_id, ordinal, name, up_x, up_y, up_z) VALUES (@id, @ordinal, @Name, @X, @Y, @Z)";

    private const string PosturesSql = "SELECT name, up_x AS x, up_y AS y, up_z AS z FROM instrument_postures WHERE instrument_id = @id ORDER BY ordinal";

    private const string PageSql = $"""
        SELECT {Columns} FROM instruments
        WHERE id > @after AND (@customer IS NULL OR customer = @customer) AND (@kind IS NULL OR oscillator_kind = @kind)
          AND (@includeRetired = 1 OR retired_at IS NULL)
          AND (@text IS NULL OR asset_number LIKE @text ESCAPE '\' OR manufacturer LIKE @text ESCAPE '\' OR model LIKE @text ESCAPE '\'
               OR serial_number LIKE @text ESCAPE '\' OR description LIKE @text ESCAPE '\')
        ORDER BY id LIMIT @take
        """;

    /// <summary>True when another instrument has <paramref name="assetNumber"/>.</summary>
    public static async Task<bool> AssetNumberTakenAsync(UnitOfWork work, string assetNumber, long exceptId = 0)
    {
        ArgumentNullException.ThrowIfNull(work);
        return await work.Connection.ExecuteScalarAsync<long>("SELECT count(*) FROM instruments WHERE asset_number = @assetNumber AND id <> @exceptId",
            new { assetNumber, exceptId }, work.Transaction) > 0;
    }

    /// <summary>Records a new instrument with its postures.</summary>
    public static async Task<Instrument> CreateAsync(UnitOfWork work, InstrumentFields fields, string actor, DateTimeOffset now)
    {
        ArgumentNullException.ThrowIfNull(work);
        ArgumentNullException.ThrowIfNull(fields);
        long id = await work.Connection.ExecuteScalarAsync<long>(InsertSql, Parameters(fields, actor, now), work.Transaction);
        await WritePosturesAsync(work, id, fields.Postures);
        return (await GetAsync(work.Connection, id, work.Transaction))!;
    }

    /// <summary>Replaces the record and its postures when the version matches; false otherwise.</summary>
    public static async Task<bool> UpdateAsync(UnitOfWork work, long id, long expectedVersion, InstrumentFields fields, string actor, DateTimeOffset now)
    {
        ArgumentNullException.ThrowIfNull(work);
        ArgumentNullException.ThrowIfNull(fields);
        var p = Parameters(fields, actor, now);
        p.Add("id", id);
        p.Add("expectedVersion", expectedVersion);
        if (await work.Connection.ExecuteAsync(UpdateSql, p, work.Transaction) != 1)
        {
            return false;
        }

        await work.Connection.ExecuteAsync("DELETE FROM instrument_postures WHERE instrument_id = @id", new { id }, work.Transaction);
        await WritePosturesAsync(work, id, fields.Postures);
        return true;
    }

    /// <summary>Retires when the version matches and it is not retired already.</summary>
    public static async Task<bool> RetireAsync(UnitOfWork work, long id, long expectedVersion, string reason, string actor, DateTimeOffset now)
    {
        ArgumentNullException.ThrowIfNull(work);
        return await work.Connection.ExecuteAsync(RetireSql, new { id, expectedVersion, reason, actor, now = Timestamps.Format(now) }, work.Transaction) == 1;
    }

    /// <summary>The instrument, or null.</summary>
    public async Task<Instrument?> GetAsync(long id, CancellationToken ct = default)
    {
        await using var connection = await database.OpenAsync(ct);
        return await GetAsync(connection, id, null);
    }

    /// <summary>Within a unit of work.</summary>
    public static Task<Instrument?> GetAsync(UnitOfWork work, long id)
    {
        ArgumentNullException.ThrowIfNull(work);
        return GetAsync(work.Connection, id, work.Transaction);
    }

    /// <summary>A page in id order after <paramref name="afterId"/>.</summary>
    public async Task<IReadOnlyList<Instrument>> ListAsync(long afterId, int limit, string? customer, string? kind, string? text, bool includeRetired, CancellationToken ct = default)
    {
        await using var connection = await database.OpenAsync(ct);
        string? like = Sql.ContainsPattern(text);
        var rows = (await connection.QueryAsync<Row>(new CommandDefinition(PageSql,
            new { after = afterId, take = limit, customer, kind, text = like, includeRetired = includeRetired ? 1 : 0 }, cancellationToken: ct))).ToArray();
        var result = new List<Instrument>(rows.Length);
        foreach (var row in rows)
        {
            result.Add(row.ToModel(await PosturesAsync(connection, row.Id, null)));
        }

        return result;
    }

    private static async Task<Instrument?> GetAsync(DbConnection connection, long id, DbTransaction? tx)
    {
        var row = await connection.QuerySingleOrDefaultAsync<Row>($"SELECT {Columns} FROM instruments WHERE id = @id", new { id }, tx);
        return row?.ToModel(await PosturesAsync(connection, id, tx));
    }

    private static async Task<IReadOnlyList<NamedPosture>> PosturesAsync(DbConnection connection, long id, DbTransaction? tx) =>
        (await connection.QueryAsync<NamedPosture>(PosturesSql, new { id }, tx)).ToArray();

    private static async Task WritePosturesAsync(UnitOfWork work, long id, IReadOnlyList<NamedPosture> postures)
    {
        for (int i = 0; i < postures.Count; i++)
        {
            var p = postures[i];
            await work.Connection.ExecuteAsync(InsertPostureSql, new { id, ordinal = i, p.Name, p.X, p.Y, p.Z }, work.Transaction);
        }
    }

    private static DynamicParameters Parameters(InstrumentFields f, string actor, DateTimeOffset now)
    {
        var p = new DynamicParameters(new
        {
            f.AssetNumber,
            f.Customer,
            f.Manufacturer,
            f.Model,
            f.SerialNumber,
            f.Description,
            f.OscillatorKind,
            f.NominalFrequencyHz,
            f.SpecificationJson,
        });
        p.Add("now", Timestamps.Format(now));
        p.Add("actor", actor);
        return p;
    }

    private sealed record Row(long Id, string AssetNumber, string Customer, string Manufacturer, string Model, string SerialNumber, string Description,
        string OscillatorKind, double NominalFrequencyHz, string Specification, string? RetiredAt, string? RetiredReason, long Version,
        string CreatedAt, string CreatedBy, string UpdatedAt, string UpdatedBy)
    {
        public Instrument ToModel(IReadOnlyList<NamedPosture> postures) => new(Id,
            new InstrumentFields(AssetNumber, Customer, Manufacturer, Model, SerialNumber, Description, OscillatorKind, NominalFrequencyHz, Specification, postures),
            Version, RetiredAt is null ? null : Timestamps.Parse(RetiredAt), RetiredReason, Timestamps.Parse(CreatedAt), CreatedBy,
            Timestamps.Parse(UpdatedAt), UpdatedBy);
    }
}
