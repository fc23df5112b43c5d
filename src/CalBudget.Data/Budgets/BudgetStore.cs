using Dapper;

namespace CalBudget.Data.Budgets;

/// <summary>The states of a budget version.</summary>
public static class BudgetStates
{
    /// <summary>Made, not approved.</summary>
    public const string Draft = "draft";

    /// <summary>Approved by an approver other than its maker; fixed.</summary>
    public const string Approved = "approved";

    /// <summary>A later version of the budget has been approved.</summary>
    public const string Superseded = "superseded";
}

/// <summary>A stored budget.</summary>
/// <param name="Id">Its id.</param>
/// <param name="RunId">The calibration run.</param>
/// <param name="TemplateId">The template.</param>
/// <param name="CreatedAt">When.</param>
/// <param name="CreatedBy">By whom.</param>
/// <param name="LatestVersion">Its newest version's number.</param>
public sealed record Budget(long Id, long RunId, string TemplateId, DateTimeOffset CreatedAt, string CreatedBy, int LatestVersion);

/// <summary>One version of a budget.</summary>
/// <param name="BudgetId">The budget.</param>
/// <param name="Number">1, 2, ...</param>
/// <param name="State">One of <see cref="BudgetStates"/>.</param>
/// <param name="Reason">Why it was made.</param>
/// <param name="TemplateVersion">The template version it was built from.</param>
/// <param name="ReadingUploadId">The readings it used.</param>
/// <param name="Snapshot">Every input with its source, as JSON.</param>
/// <param name="Result">The evaluation, as JSON.</param>
/// <param name="EngineVersion">The engine that evaluated it.</param>
/// <param name="MadeAt">When.</param>
/// <param name="MadeBy">By whom (the key).</param>
/// <param name="MadeByPerson">The person behind that key.</param>
/// <param name="ApprovedAt">When approved.</param>
/// <param name="ApprovedBy">By whom.</param>
/// <param name="SignatureMeaning">What the approval means, in the approver's words.</param>
/// <param name="SupersededAt">When a later version was approved.</param>
/// <param name="Stages">The calibration result as stated and the in-use prediction, as JSON; null for versions made before the two were kept apart.</param>
public sealed record BudgetVersion(long BudgetId, int Number, string State, string Reason, int TemplateVersion, long? ReadingUploadId, string Snapshot,
    string Result, string EngineVersion, DateTimeOffset MadeAt, string MadeBy, string MadeByPerson, DateTimeOffset? ApprovedAt, string? ApprovedBy, string? SignatureMeaning,
    DateTimeOffset? SupersededAt, string? Stages = null);

/// <summary>Budgets and their versions.</summary>
public sealed class BudgetStore(IDbConnectionFactory database)
{
    private const string BudgetColumns = """
        b.id, b.run_id AS runId, b.template_id AS templateId, b.created_at AS createdAt, b.created_by AS createdBy,
        (SELECT max(v.number) FROM budget_versions v WHERE v.budget_id = b.id) AS latestVersion
        """;

    private const string VersionColumns = """
        budget_id AS budgetId, number, state, reason, template_version AS templateVersion, reading_upload_id AS readingUploadId, snapshot, result,
        engine_version AS engineVersion, made_at AS madeAt, made_by AS madeBy, made_by_person AS madeByPerson, approved_at AS approvedAt, approved_by AS approvedBy,
        signature_meaning AS signatureMeaning, superseded_at AS supersededAt, stages
        """;

    /// <summary>A new budget (its first version is added with <see cref="AddVersionAsync"/> in the same work).</summary>
    public static Task<long> CreateAsync(UnitOfWork work, long runId, string templateId, string actor, DateTimeOffset now)
    {
        ArgumentNullException.ThrowIfNull(work);
        return work.Connection.ExecuteScalarAsync<long>(
            "INSERT INTO budgets (run_id, template_id, created_at, created_by) VALUES (@runId, @templateId, @now, @actor) RETURNING id",
            new { runId, templateId, now = Timestamps.Format(now), actor }, work.Transaction);
    }

    /// <summary>Adds a draft version.</summary>
    public static Task AddVersionAsync(UnitOfWork work, long budgetId, int number, string reason, int templateVersion, long? readingUploadId, string snapshot,
        string result, string engineVersion, string actor, string person, DateTimeOffset now, string? stages = null)
    {
        ArgumentNullException.ThrowIfNull(work);
        const string sql = """
            INSERT INTO budget_versions (budget_id, number, state, reason, template_version, reading_upload_id, snapshot, result, engine_version, made_at, made_by, made_by_person, stages)
            VALUES (@budgetId, @number, 'draft', @reason, @templateVersion, @readingUploadId, @snapshot, @result, @engineVersion, @now, @actor, @person, @stages)
            """;
        return work.Connection.ExecuteAsync(sql, new { budgetId, number, reason, templateVersion, readingUploadId, snapshot, result, engineVersion, now = Timestamps.Format(now), actor, person, stages },
            work.Transaction);
    }

    /// <summary>Approves a draft version and supersedes the approved versions before it.</summary>
    public static async Task ApproveAsync(UnitOfWork work, long budgetId, int number, string actor, string meaning, DateTimeOffset now)
    {
        ArgumentNullException.ThrowIfNull(work);
        string at = Timestamps.Format(now);
        await work.Connection.ExecuteAsync(
            "UPDATE budget_versions SET state = 'superseded', superseded_at = @at WHERE budget_id = @budgetId AND number < @number AND state = 'approved'",
            new { budgetId, number, at }, work.Transaction);
        await work.Connection.ExecuteAsync(
            "UPDATE budget_versions SET state = 'approved', approved_at = @at, approved_by = @actor, signature_meaning = @meaning WHERE budget_id = @budgetId AND number = @number AND state = 'draft'",
            new { budgetId, number, at, actor, meaning }, work.Transaction);
    }

    /// <summary>The budget, or null.</summary>
    public static async Task<Budget?> GetAsync(UnitOfWork work, long id)
    {
        ArgumentNullException.ThrowIfNull(work);
        return (await work.Connection.QuerySingleOrDefaultAsync<BudgetRow>($"SELECT {BudgetColumns} FROM budgets b WHERE b.id = @id", new { id }, work.Transaction))?.ToModel();
    }

    /// <summary>The budget, or null.</summary>
    public async Task<Budget?> GetAsync(long id, CancellationToken ct = default)
    {
        await using var connection = await database.OpenAsync(ct);
        return (await connection.QuerySingleOrDefaultAsync<BudgetRow>(new CommandDefinition($"SELECT {BudgetColumns} FROM budgets b WHERE b.id = @id", new { id }, cancellationToken: ct)))?.ToModel();
    }

    internal const string PageSql = $"SELECT {BudgetColumns} FROM budgets b WHERE b.id > @afterId ORDER BY b.id LIMIT @limit";

    // a separate statement, so that the (run_id, id) index serves it (an "@runId IS NULL OR" filter would keep SQLite off it)
    internal const string PageByRunSql = $"SELECT {BudgetColumns} FROM budgets b WHERE b.run_id = @runId AND b.id > @afterId ORDER BY b.id LIMIT @limit";

    // the budgets of an instrument's runs: its runs by their index, then each run's budgets by theirs
    internal const string PageByInstrumentSql = $"""
        SELECT {BudgetColumns} FROM budgets b JOIN calibration_runs r ON r.id = b.run_id
        WHERE r.instrument_id = @instrumentId AND b.id > @afterId AND (@runId IS NULL OR b.run_id = @runId)
        ORDER BY b.id LIMIT @limit
        """;

    /// <summary>A page of budgets in id order, of one run and/or of one instrument's runs when given.</summary>
    public async Task<IReadOnlyList<Budget>> ListAsync(long afterId, int limit, long? runId, long? instrumentId = null, CancellationToken ct = default)
    {
        await using var connection = await database.OpenAsync(ct);
        string sql = instrumentId is not null ? PageByInstrumentSql : runId is not null ? PageByRunSql : PageSql;
        var rows = await connection.QueryAsync<BudgetRow>(new CommandDefinition(sql, new { afterId, limit, runId, instrumentId }, cancellationToken: ct));
        return rows.Select(r => r.ToModel()).ToArray();
    }

    /// <summary>One version, or null.</summary>
    public static async Task<BudgetVersion?> VersionAsync(UnitOfWork work, long budgetId, int number)
    {
        ArgumentNullException.ThrowIfNull(work);
        return (await work.Connection.QuerySingleOrDefaultAsync<VersionRow>($"SELECT {VersionColumns} FROM budget_versions WHERE budget_id = @budgetId AND number = @number",
            new { budgetId, number }, work.Transaction))?.ToModel();
    }

    /// <summary>One version, or null.</summary>
    public async Task<BudgetVersion?> VersionAsync(long budgetId, int number, CancellationToken ct = default)
    {
        await using var connection = await database.OpenAsync(ct);
        return (await connection.QuerySingleOrDefaultAsync<VersionRow>(new CommandDefinition(
            $"SELECT {VersionColumns} FROM budget_versions WHERE budget_id = @budgetId AND number = @number", new { budgetId, number }, cancellationToken: ct)))?.ToModel();
    }

    /// <summary>The newest version of each of <paramref name="budgets"/>, by budget id, in one query.</summary>
    public async Task<IReadOnlyDictionary<long, BudgetVersion>> LatestVersionsAsync(IReadOnlyCollection<Budget> budgets, CancellationToken ct = default)
    {
        ArgumentNullException.ThrowIfNull(budgets);
        if (budgets.Count == 0)
        {
            return new Dictionary<long, BudgetVersion>();
        }

        // a page is at most 200 budgets: well within SQLite's limit on bound values
        const string sql = $"""
            SELECT {VersionColumns} FROM budget_versions v
            WHERE v.budget_id IN @ids AND v.number = (SELECT max(w.number) FROM budget_versions w WHERE w.budget_id = v.budget_id)
            """;
        await using var connection = await database.OpenAsync(ct);
        var rows = await connection.QueryAsync<VersionRow>(new CommandDefinition(sql, new { ids = budgets.Select(b => b.Id).ToArray() }, cancellationToken: ct));
        return rows.Select(r => r.ToModel()).ToDictionary(v => v.BudgetId);
    }

    /// <summary>Every version, oldest first.</summary>
    public async Task<IReadOnlyList<BudgetVersion>> VersionsAsync(long budgetId, CancellationToken ct = default)
    {
        await using var connection = await database.OpenAsync(ct);
        var rows = await connection.QueryAsync<VersionRow>(new CommandDefinition(
            $"SELECT {VersionColumns} FROM budget_versions WHERE budget_id = @budgetId ORDER BY number", new { budgetId }, cancellationToken: ct));
        return rows.Select(r => r.ToModel()).ToArray();
    }

    // a class, not a positional record: with no rows SQLite gives the computed column no type, which a constructor match needs
    private sealed class BudgetRow
    {
        public long Id { get; init; }
        public long RunId { get; init; }
        public string TemplateId { get; init; } = "";
        public string CreatedAt { get; init; } = "";
        public string CreatedBy { get; init; } = "";
        public long LatestVersion { get; init; }

        public Budget ToModel() => new(Id, RunId, TemplateId, Timestamps.Parse(CreatedAt), CreatedBy, (int)LatestVersion);
    }

    private sealed record VersionRow(long BudgetId, long Number, string State, string Reason, long TemplateVersion, long? ReadingUploadId, string Snapshot,
        string Result, string EngineVersion, string MadeAt, string MadeBy, string MadeByPerson, string? ApprovedAt, string? ApprovedBy, string? SignatureMeaning, string? SupersededAt,
        string? Stages)
    {
        public BudgetVersion ToModel() => new(BudgetId, (int)Number, State, Reason, (int)TemplateVersion, ReadingUploadId, Snapshot, Result, EngineVersion,
            Timestamps.Parse(MadeAt), MadeBy, MadeByPerson, ApprovedAt is null ? null : Timestamps.Parse(ApprovedAt), ApprovedBy, SignatureMeaning,
            SupersededAt is null ? null : Timestamps.Parse(SupersededAt), Stages);
    }
}
