using DbUp;
using DbUp.Engine.Output;

namespace CalBudget.Data.Schema;

/// <summary>The outcome of bringing a database up to date.</summary>
/// <param name="AppliedScripts">The scripts run now, in order (empty when the database was current).</param>
/// <param name="CreatedNew">True when the database had no schema before, so first-run seeding may happen.</param>
public sealed record MigrationResult(IReadOnlyList<string> AppliedScripts, bool CreatedNew);

/// <summary>
/// Applies <c>migrations/*.sql</c> (embedded in this assembly as <c>CalBudget.Migrations.NNNN_name.sql</c>) with DbUp, in name
/// order, each in its own transaction, and journals them in the <c>SchemaVersions</c> table so each runs once.
/// </summary>
public static class Migrator
{
    private const string Prefix = "CalBudget.Migrations.";

    /// <summary>The embedded scripts' names in the order they apply.</summary>
    public static IReadOnlyList<string> ScriptNames { get; } = typeof(Migrator).Assembly.GetManifestResourceNames()
        .Where(n => n.StartsWith(Prefix, StringComparison.Ordinal)).Select(n => n[Prefix.Length..]).Order(StringComparer.Ordinal).ToArray();

    /// <summary>Brings the database up to date; throws with the failing script's name when one fails (the failed script is rolled back).</summary>
    public static async Task<MigrationResult> MigrateAsync(SqliteDatabase database, Action<string>? log = null, CancellationToken cancellationToken = default)
    {
        ArgumentNullException.ThrowIfNull(database);
        await database.EnableWriteAheadLogAsync(cancellationToken).ConfigureAwait(false);
        var upgrader = DeployChanges.To
            .SqliteDatabase(database.ConnectionString)
            .WithScriptsEmbeddedInAssembly(typeof(Migrator).Assembly, name => name.StartsWith(Prefix, StringComparison.Ordinal))
            .WithTransactionPerScript()
            .LogTo(new Sink(log))
            .Build();
        bool createdNew = upgrader.GetExecutedScripts().Count == 0;
        var result = upgrader.PerformUpgrade();
        if (!result.Successful)
        {
            throw new InvalidOperationException($"Migration {result.ErrorScript?.Name ?? "(unknown)"} failed: {result.Error?.Message}", result.Error);
        }

        return new MigrationResult(result.Scripts.Select(s => s.Name[Prefix.Length..]).ToArray(), createdNew);
    }

    private sealed class Sink(Action<string>? log) : IUpgradeLog
    {
        public void LogTrace(string format, params object[] args) { }

        public void LogDebug(string format, params object[] args) { }

        public void LogInformation(string format, params object[] args) => log?.Invoke(Format(format, args));

        public void LogWarning(string format, params object[] args) => log?.Invoke(Format(format, args));

        public void LogError(string format, params object[] args) => log?.Invoke(Format(format, args));

        public void LogError(Exception ex, string format, params object[] args) => log?.Invoke(Format(format, args) + ": " + ex.Message);

        private static string Format(string format, object[] args) =>
            args.Length == 0 ? format : string.Format(System.Globalization.CultureInfo.InvariantCulture, format, args);
    }
}
