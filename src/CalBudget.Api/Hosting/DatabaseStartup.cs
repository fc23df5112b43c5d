using CalBudget.Data;
using CalBudget.Data.Keys;
using CalBudget.Data.Schema;

namespace CalBudget.Api.Hosting;

/// <summary>
/// Brings the database up to date before the service answers, and in the Development environment only, gives a new
/// database the demo keys listed in the README. Production never seeds anything.
/// </summary>
public static class DatabaseStartup
{
    /// <summary>The demo keys: name, role, value and the invented person who holds it. Demo only: they are public, in the README.</summary>
    public static IReadOnlyList<(string Name, string Role, string Key, string Holder)> DemoKeys { get; } =
    [
        ("demo-technician", Roles.Technician, "cbk_de00000000000001_demo-technician-key-not-for-production", "demo-technician"),
        ("demo-approver", Roles.Approver, "cbk_de00000000000002_demo-approver-key-not-for-production", "demo-approver"),
        ("demo-auditor", Roles.Auditor, "cbk_de00000000000003_demo-auditor-key-not-for-production", "demo-auditor"),
        ("demo-integration", Roles.Integration, "cbk_de00000000000004_demo-integration-key-not-for-production", "demo-integration"),
        ("demo-admin", Roles.Admin, "cbk_de00000000000005_demo-admin-key-not-for-production", "demo-admin"),
    ];

    /// <summary>Migrates, then seeds a new Development database.</summary>
    public static async Task InitialiseDatabaseAsync(this IServiceProvider services, bool seedDemoData, CancellationToken ct = default)
    {
        ArgumentNullException.ThrowIfNull(services);
        _ = services.GetRequiredService<Budgets.TemplateCatalog>(); // a malformed template stops the start here, naming its file and field
        _ = services.GetRequiredService<Budgets.LabScope>(); // and so does a malformed scope
        _ = services.GetRequiredService<Certificates.CertificateSetup>(); // so do missing fonts and a malformed wording file
        var database = services.GetRequiredService<SqliteDatabase>();
        var log = services.GetRequiredService<ILoggerFactory>().CreateLogger("CalBudget.Database");
        var result = await Migrator.MigrateAsync(database, message => Log.Migration(log, message), ct);
        Log.DatabaseReady(log, database.FilePath, result.AppliedScripts.Count);
        if (seedDemoData && result.CreatedNew)
        {
            var keys = services.GetRequiredService<ApiKeyStore>();
            foreach (var (name, role, key, holder) in DemoKeys)
            {
                await keys.InsertDemoKeyAsync(name, role, key, holder, ct);
            }

            var users = services.GetRequiredService<Auth.UserAccounts>();
            foreach (var (name, role, password) in Auth.UserAccounts.DemoUsers)
            {
                await users.CreateAsync(name, role, password, isDemo: true, actor: "demo-seed", ct: ct);
            }

            await DemoData.SeedAsync(services, ct);
            Log.DemoKeysSeeded(log);
        }
    }
}
