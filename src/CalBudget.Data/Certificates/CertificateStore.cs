using Dapper;

namespace CalBudget.Data.Certificates;

/// <summary>The states of a certificate.</summary>
public static class CertificateStates
{
    /// <summary>In force.</summary>
    public const string Issued = "issued";

    /// <summary>Replaced by an amendment (a later certificate that names it).</summary>
    public const string Amended = "amended";

    /// <summary>Withdrawn, with a reason.</summary>
    public const string Withdrawn = "withdrawn";
}

/// <summary>A certificate's record (the PDF itself is read separately).</summary>
/// <param name="Id">Its id.</param>
/// <param name="Number">The certificate number.</param>
/// <param name="BudgetId">The budget.</param>
/// <param name="BudgetVersion">The approved version it states.</param>
/// <param name="InstrumentId">The instrument.</param>
/// <param name="Customer">The customer.</param>
/// <param name="State">One of <see cref="CertificateStates"/>.</param>
/// <param name="ReplacesId">The certificate it amends.</param>
/// <param name="ReplacedById">The amendment that replaced it.</param>
/// <param name="AmendmentNote">Why it replaces the earlier one.</param>
/// <param name="Settings">The issuing request's settings, as JSON.</param>
/// <param name="Result">The stated result (calibratedAt, estimate, standardUncertainty, expandedUncertainty), as JSON.</param>
/// <param name="Decision">The conformity decision with its numbers, as JSON, when asked for.</param>
/// <param name="Recall">The recall interval, as JSON, when asked for.</param>
/// <param name="Content">The worded content the PDF was laid out from, as JSON.</param>
/// <param name="PdfSha256">SHA-256 of the PDF, lowercase hex.</param>
/// <param name="PdfBytes">Its length.</param>
/// <param name="IssuedAt">When.</param>
/// <param name="IssuedBy">By whom.</param>
/// <param name="WithdrawnAt">When withdrawn.</param>
/// <param name="WithdrawnBy">By whom.</param>
/// <param name="WithdrawnReason">Why.</param>
public sealed record Certificate(long Id, string Number, long BudgetId, int BudgetVersion, long InstrumentId, string Customer, string State, long? ReplacesId,
    long? ReplacedById, string? AmendmentNote, string Settings, string Result, string? Decision, string? Recall, string Content, string PdfSha256, long PdfBytes,
    DateTimeOffset IssuedAt, string IssuedBy, DateTimeOffset? WithdrawnAt, string? WithdrawnBy, string? WithdrawnReason);

/// <summary>What a new certificate stores.</summary>
public sealed record NewCertificate(string Number, long BudgetId, int BudgetVersion, long InstrumentId, string Customer, long? ReplacesId, string? AmendmentNote,
    string Settings, string Result, string? Decision, string? Recall, string Content, byte[] Pdf, string PdfSha256);

/// <summary>Certificates: issue, amend, withdraw, read.</summary>
public sealed class CertificateStore(IDbConnectionFactory database)
{
    private const string Columns = """
        id, number, budget_id AS budgetId, budget_version AS budgetVersion, instrument_id AS instrumentId, customer, state, replaces_id AS replacesId,
        replaced_by_id AS replacedById, amendment_note AS amendmentNote, settings, result, decision, recall, content, pdf_sha256 AS pdfSha256, length(pdf) AS pdfBytes,
        issued_at AS issuedAt, issued_by AS issuedBy, withdrawn_at AS withdrawnAt, withdrawn_by AS withdrawnBy, withdrawn_reason AS withdrawnReason
        """;

    /// <summary>How many certificates have numbers starting with <paramref name="prefix"/> (for the next sequence number).</summary>
    public static Task<long> CountWithPrefixAsync(UnitOfWork work, string prefix)
    {
        ArgumentNullException.ThrowIfNull(work);
        return work.Connection.ExecuteScalarAsync<long>("SELECT count(*) FROM certificates WHERE substr(number, 1, length(@prefix)) = @prefix",
            new { prefix }, work.Transaction);
    }

    /// <summary>Stores a new certificate; when it replaces one, that one becomes amended.</summary>
    public static async Task<long> IssueAsync(UnitOfWork work, NewCertificate c, string actor, DateTimeOffset now)
    {
        ArgumentNullException.ThrowIfNull(work);
        ArgumentNullException.ThrowIfNull(c);
        const string sql = """
            INSERT INTO certificates (number, budget_id, budget_version, instrument_id, customer, state, replaces_id, amendment_note, settings, result, decision, recall,
                                      content, pdf, pdf_sha256, issued_at, issued_by)
            VALUES (@Number, @BudgetId, @BudgetVersion, @InstrumentId, @Customer, 'issued', @ReplacesId, @AmendmentNote, @Settings, @Result, @Decision, @Recall,
                    @Content, @Pdf, @PdfSha256, @now, @actor)
            RETURNING id
            """;
        long id = await work.Connection.ExecuteScalarAsync<long>(sql, new
        {
            c.Number, c.BudgetId, c.BudgetVersion, c.InstrumentId, c.Customer, c.ReplacesId, c.AmendmentNote, c.Settings, c.Result, c.Decision, c.Recall, c.Content, c.Pdf,
            c.PdfSha256, now = Timestamps.Format(now), actor,
        }, work.Transaction);
        if (c.ReplacesId is { } old)
        {
            await work.Connection.ExecuteAsync("UPDATE certificates SET state = 'amended', replaced_by_id = @id WHERE id = @old AND state = 'issued'",
                new { id, old }, work.Transaction);
        }

        return id;
    }

    /// <summary>Withdraws an issued certificate.</summary>
    public static Task WithdrawAsync(UnitOfWork work, long id, string reason, string actor, DateTimeOffset now)
    {
        ArgumentNullException.ThrowIfNull(work);
        return work.Connection.ExecuteAsync(
            "UPDATE certificates SET state = 'withdrawn', withdrawn_at = @now, withdrawn_by = @actor, withdrawn_reason = @reason WHERE id = @id AND state = 'issued'",
            new { id, reason, actor, now = Timestamps.Format(now) }, work.Transaction);
    }

    /// <summary>The certificate, or null.</summary>
    public static async Task<Certificate?> GetAsync(UnitOfWork work, long id)
    {
        ArgumentNullException.ThrowIfNull(work);
        var row = await work.Connection.QuerySingleOrDefaultAsync<Row>($"SELECT {Columns} FROM certificates WHERE id = @id", new { id }, work.Transaction);
        return row?.ToModel();
    }

    /// <summary>The certificate, or null.</summary>
    public async Task<Certificate?> GetAsync(long id, CancellationToken ct = default)
    {
        await using var connection = await database.OpenAsync(ct);
        var row = await connection.QuerySingleOrDefaultAsync<Row>(new CommandDefinition($"SELECT {Columns} FROM certificates WHERE id = @id", new { id }, cancellationToken: ct));
        return row?.ToModel();
    }

    /// <summary>The stored PDF, byte for byte, or null.</summary>
    public async Task<byte[]?> PdfAsync(long id, CancellationToken ct = default)
    {
        await using var connection = await database.OpenAsync(ct);
        return await connection.QuerySingleOrDefaultAsync<byte[]>(new CommandDefinition("SELECT pdf FROM certificates WHERE id = @id", new { id }, cancellationToken: ct));
    }

    internal const string PageSql = $"""
        SELECT {Columns} FROM certificates
        WHERE id > @afterId AND (@customer IS NULL OR customer = @customer)
        ORDER BY id LIMIT @limit
        """;

    // separate statements, so that the (instrument_id, id) and (customer, id) indexes serve them
    internal const string PageByInstrumentSql = $"""
        SELECT {Columns} FROM certificates
        WHERE instrument_id = @instrumentId AND id > @afterId AND (@customer IS NULL OR customer = @customer)
        ORDER BY id LIMIT @limit
        """;

    internal const string PageByCustomerSql = $"""
        SELECT {Columns} FROM certificates
        WHERE customer = @customer AND id > @afterId
        ORDER BY id LIMIT @limit
        """;

    /// <summary>A page in id order after <paramref name="afterId"/>, by instrument and customer when given.</summary>
    public async Task<IReadOnlyList<Certificate>> ListAsync(long afterId, int limit, long? instrumentId, string? customer, CancellationToken ct = default)
    {
        string sql = instrumentId is not null ? PageByInstrumentSql : customer is not null ? PageByCustomerSql : PageSql;
        await using var connection = await database.OpenAsync(ct);
        var rows = await connection.QueryAsync<Row>(new CommandDefinition(sql, new { afterId, limit, instrumentId, customer }, cancellationToken: ct));
        return rows.Select(r => r.ToModel()).ToArray();
    }

    /// <summary>The certificate in force (issued, not amended or withdrawn) that states <paramref name="budgetId"/>'s version, if any.</summary>
    public static async Task<Certificate?> InForceForVersionAsync(UnitOfWork work, long budgetId, int version)
    {
        ArgumentNullException.ThrowIfNull(work);
        return (await work.Connection.QueryFirstOrDefaultAsync<Row>(
            $"SELECT {Columns} FROM certificates WHERE budget_id = @budgetId AND budget_version = @version AND state = 'issued' ORDER BY id LIMIT 1",
            new { budgetId, version }, work.Transaction))?.ToModel();
    }

    /// <summary>The instrument's certificates in force or amended (not withdrawn), oldest first, for its history.</summary>
    public static async Task<IReadOnlyList<Certificate>> HistoryAsync(UnitOfWork work, long instrumentId)
    {
        ArgumentNullException.ThrowIfNull(work);
        var rows = await work.Connection.QueryAsync<Row>($"SELECT {Columns} FROM certificates WHERE instrument_id = @instrumentId AND state = 'issued' ORDER BY id",
            new { instrumentId }, work.Transaction);
        return rows.Select(r => r.ToModel()).ToArray();
    }

    private sealed class Row
    {
        public long Id { get; init; }
        public string Number { get; init; } = "";
        public long BudgetId { get; init; }
        public long BudgetVersion { get; init; }
        public long InstrumentId { get; init; }
        public string Customer { get; init; } = "";
        public string State { get; init; } = "";
        public long? ReplacesId { get; init; }
        public long? ReplacedById { get; init; }
        public string? AmendmentNote { get; init; }
        public string Settings { get; init; } = "";
        public string Result { get; init; } = "";
        public string? Decision { get; init; }
        public string? Recall { get; init; }
        public string Content { get; init; } = "";
        public string PdfSha256 { get; init; } = "";
        public long PdfBytes { get; init; }
        public string IssuedAt { get; init; } = "";
        public string IssuedBy { get; init; } = "";
        public string? WithdrawnAt { get; init; }
        public string? WithdrawnBy { get; init; }
        public string? WithdrawnReason { get; init; }

        public Certificate ToModel() => new(Id, Number, BudgetId, (int)BudgetVersion, InstrumentId, Customer, State, ReplacesId, ReplacedById, AmendmentNote, Settings,
            Result, Decision, Recall, Content, PdfSha256, PdfBytes, Timestamps.Parse(IssuedAt), IssuedBy, WithdrawnAt is null ? null : Timestamps.Parse(WithdrawnAt), WithdrawnBy,
            WithdrawnReason);
    }
}
