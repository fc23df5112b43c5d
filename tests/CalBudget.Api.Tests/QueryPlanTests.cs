using CalBudget.Data;
using CalBudget.Data.Audit;
using CalBudget.Data.Budgets;
using CalBudget.Data.Calibrations;
using CalBudget.Data.Certificates;
using Dapper;

namespace CalBudget.Api.Tests;

/// <summary>
/// Each filtered list has its own statement so that the filter's index serves it: SQLite's query plan for each names the
/// index and scans no table, on the real schema. (An "@x IS NULL OR col = @x" filter keeps the planner off an index; the
/// run list by instrument once scanned every run that way, README "Performance".)
/// </summary>
public sealed class QueryPlanTests : IDisposable
{
    private readonly TempFolder _folder = new("calbudget-plan-");

    public void Dispose() => _folder.Dispose();

    public static TheoryData<string, string, string> Statements => new()
    {
        { nameof(CalibrationRunStore.PageByInstrumentSql), CalibrationRunStore.PageByInstrumentSql, "calibration_runs_instrument" },
        { nameof(CalibrationRunStore.PageByReferenceSql), CalibrationRunStore.PageByReferenceSql, "calibration_runs_reference" },
        { nameof(BudgetStore.PageByRunSql), BudgetStore.PageByRunSql, "budgets_run" },
        { nameof(BudgetStore.PageByInstrumentSql), BudgetStore.PageByInstrumentSql, "calibration_runs_instrument" },
        { nameof(CertificateStore.PageByInstrumentSql), CertificateStore.PageByInstrumentSql, "certificates_instrument" },
        { nameof(CertificateStore.PageByCustomerSql), CertificateStore.PageByCustomerSql, "certificates_customer" },
        { nameof(AuditLog.PageByEntitySql), AuditLog.PageByEntitySql, "audit_entries_entity" },
        { nameof(AuditLog.PageByActorSql), AuditLog.PageByActorSql, "audit_entries_actor" },
    };

    [Theory]
    [MemberData(nameof(Statements))]
    public async Task TheFiltersIndexServesTheList(string name, string sql, string index)
    {
        var database = new SqliteDatabase(_folder.Path);
        await CalBudget.Data.Schema.Migrator.MigrateAsync(database);
        await using var connection = await database.OpenAsync();
        var parameters = new
        {
            after = 0L, afterId = 0L, afterSeq = 0L, take = 50, limit = 50, instrumentId = 1L, referenceId = 1L, runId = 1L,
            customer = "a", entityType = "instrument", entityId = "1", actor = "kim", condition = (string?)null,
            includeRetired = 0, from = (string?)null, to = (string?)null,
        };
        var plan = (await connection.QueryAsync<(long Id, long Parent, long NotUsed, string Detail)>("EXPLAIN QUERY PLAN " + sql, parameters))
            .Select(p => p.Detail).ToArray();
        string text = string.Join(" | ", plan);
        Assert.True(plan.Any(d => d.Contains($"INDEX {index}", StringComparison.Ordinal)), $"{name}: {text}");
        Assert.False(plan.Any(d => d.StartsWith("SCAN", StringComparison.Ordinal)), $"{name} scans: {text}");
    }
}
