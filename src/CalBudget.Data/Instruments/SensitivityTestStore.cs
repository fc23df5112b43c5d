using System.Text.Json;
using Dapper;

namespace CalBudget.Data.Instruments;

/// <summary>A stored tip-over test.</summary>
/// <param name="Id">Its id.</param>
/// <param name="InstrumentId">The instrument.</param>
/// <param name="Gamma">Gamma per g [x, y, z] in the body frame.</param>
/// <param name="OffsetAtRest">The fitted offset without acceleration.</param>
/// <param name="Covariance">Covariance of Gamma (3 x 3), when known.</param>
/// <param name="DegreesOfFreedom">n - 4.</param>
/// <param name="RunIds">The runs fitted.</param>
/// <param name="Notes">Free text.</param>
/// <param name="TestedAt">When.</param>
/// <param name="TestedBy">By whom.</param>
public sealed record SensitivityTest(long Id, long InstrumentId, double[] Gamma, double OffsetAtRest, double[][]? Covariance, int DegreesOfFreedom,
    long[] RunIds, string Notes, DateTimeOffset TestedAt, string TestedBy);

/// <summary>Tip-over tests.</summary>
public sealed class SensitivityTestStore(IDbConnectionFactory database)
{
    private const string Columns = """
        id, instrument_id AS instrumentId, gamma_x AS gammaX, gamma_y AS gammaY, gamma_z AS gammaZ, offset_at_rest AS offsetAtRest, covariance, dof,
        run_ids AS runIds, notes, tested_at AS testedAt, tested_by AS testedBy
        """;

    /// <summary>Records a test.</summary>
    public static async Task<SensitivityTest> CreateAsync(UnitOfWork work, long instrumentId, double[] gamma, double offsetAtRest, double[][]? covariance, int dof,
        long[] runIds, string notes, string actor, DateTimeOffset now)
    {
        ArgumentNullException.ThrowIfNull(work);
        ArgumentNullException.ThrowIfNull(gamma);
        const string sql = """
            INSERT INTO sensitivity_tests (instrument_id, gamma_x, gamma_y, gamma_z, offset_at_rest, covariance, dof, run_ids, notes, tested_at, tested_by)
            VALUES (@instrumentId, @x, @y, @z, @offsetAtRest, @covariance, @dof, @runIds, @notes, @now, @actor) RETURNING id
            """;
        long id = await work.Connection.ExecuteScalarAsync<long>(sql, new
        {
            instrumentId,
            x = gamma[0],
            y = gamma[1],
            z = gamma[2],
            offsetAtRest,
            covariance = covariance is null ? null : JsonSerializer.Serialize(covariance),
            dof,
            runIds = JsonSerializer.Serialize(runIds),
            notes,
            now = Timestamps.Format(now),
            actor,
        }, work.Transaction);
        return (await LatestAsync(work, instrumentId))! with { Id = id };
    }

    /// <summary>The newest test of an instrument, or null.</summary>
    public static async Task<SensitivityTest?> LatestAsync(UnitOfWork work, long instrumentId)
    {
        ArgumentNullException.ThrowIfNull(work);
        return (await work.Connection.QuerySingleOrDefaultAsync<Row>($"SELECT {Columns} FROM sensitivity_tests WHERE instrument_id = @instrumentId ORDER BY id DESC LIMIT 1",
            new { instrumentId }, work.Transaction))?.ToModel();
    }

    /// <summary>Every test of an instrument, oldest first.</summary>
    public async Task<IReadOnlyList<SensitivityTest>> ListAsync(long instrumentId, CancellationToken ct = default)
    {
        await using var connection = await database.OpenAsync(ct);
        var rows = await connection.QueryAsync<Row>(new CommandDefinition($"SELECT {Columns} FROM sensitivity_tests WHERE instrument_id = @instrumentId ORDER BY id",
            new { instrumentId }, cancellationToken: ct));
        return rows.Select(r => r.ToModel()).ToArray();
    }

    private sealed record Row(long Id, long InstrumentId, double GammaX, double GammaY, double GammaZ, double OffsetAtRest, string? Covariance, long Dof,
        string RunIds, string Notes, string TestedAt, string TestedBy)
    {
        public SensitivityTest ToModel() => new(Id, InstrumentId, [GammaX, GammaY, GammaZ], OffsetAtRest,
            Covariance is null ? null : JsonSerializer.Deserialize<double[][]>(Covariance), (int)Dof, JsonSerializer.Deserialize<long[]>(RunIds)!, Notes,
            Timestamps.Parse(TestedAt), TestedBy);
    }
}
