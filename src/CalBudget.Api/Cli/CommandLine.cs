using CalBudget.Api.Hosting;
using CalBudget.Data;
using CalBudget.Data.Keys;
using CalBudget.Data.Schema;

namespace CalBudget.Api.Cli;

/// <summary>
/// Administrative commands on the same executable, against the same data directory as the service:
/// <c>keys create --role R --name N</c> (prints the new key alone on the last line), <c>keys list</c>, <c>keys revoke NAME</c>.
/// Settings come from appsettings, environment variables (<c>CalBudget__DataDirectory</c>) and <c>--CalBudget:DataDirectory=...</c>.
/// </summary>
public static class CommandLine
{
    /// <summary>True when the first argument names a command rather than a host setting.</summary>
    public static bool IsCommand(string[] args) => args is ["keys", ..] or ["users", ..] or ["backup", ..];

    /// <summary>Runs the command; returns the process exit code (0 done, 1 refused, 2 usage).</summary>
    public static async Task<int> RunAsync(string[] args, TextWriter stdout, TextWriter stderr)
    {
        ArgumentNullException.ThrowIfNull(args);
        ArgumentNullException.ThrowIfNull(stdout);
        ArgumentNullException.ThrowIfNull(stderr);
        var (positional, named, rest) = Split(args.Skip(1).ToArray());
        var config = new ConfigurationBuilder()
            .SetBasePath(AppContext.BaseDirectory)
            .AddJsonFile("appsettings.json", optional: true)
            .AddEnvironmentVariables()
            .AddCommandLine(rest)
            .Build();
        var settings = config.GetSection(CalBudgetOptions.Section).Get<CalBudgetOptions>() ?? new CalBudgetOptions();
        var database = new SqliteDatabase(settings.DataDirectory);
        await Migrator.MigrateAsync(database);
        if (args[0] == "backup")
        {
            return await BackupAsync(positional, database, stdout, stderr);
        }

        if (args[0] == "users")
        {
            return await UsersAsync(positional, named, database, stdout, stderr);
        }

        var store = new ApiKeyStore(database, TimeProvider.System);
        try
        {
            switch (positional)
            {
                case ["create"] when named.TryGetValue("role", out var role) && named.TryGetValue("name", out var name):
                    string key = await store.CreateAsync(name, role, holder: named.GetValueOrDefault("holder"));
                    await stdout.WriteLineAsync($"Created key '{name}' with the role {role} in {database.FilePath}.");
                    await stdout.WriteLineAsync("Store it now: it is shown once and cannot be recovered.");
                    await stdout.WriteLineAsync(key);
                    return 0;
                case ["list"]:
                    await stdout.WriteLineAsync($"{"name",-32} {"role",-12} {"created (UTC)",-20} status");
                    foreach (var k in await store.ListAsync())
                    {
                        string status = k.RevokedAt is { } at ? $"revoked {at:yyyy-MM-dd HH:mm}" : k.IsDemo ? "active (demo)" : "active";
                        await stdout.WriteLineAsync($"{k.Name,-32} {k.Role,-12} {k.CreatedAt:yyyy-MM-dd HH:mm}     {status}");
                    }

                    return 0;
                case ["revoke", var revoked]:
                    await store.RevokeAsync(revoked);
                    await stdout.WriteLineAsync($"Revoked key '{revoked}'.");
                    return 0;
                default:
                    await stderr.WriteLineAsync("usage: keys create --role <technician|approver|auditor|integration|admin> --name <label> [--holder <person>]");
                    await stderr.WriteLineAsync("       keys list");
                    await stderr.WriteLineAsync("       keys revoke <name>");
                    return 2;
            }
        }
        catch (ApiKeyException ex)
        {
            await stderr.WriteLineAsync(ex.Message);
            return 1;
        }
    }

    // backup create <file> (while the service runs), backup restore <file> (with the service stopped)
    private static async Task<int> BackupAsync(string[] positional, SqliteDatabase database, TextWriter stdout, TextWriter stderr)
    {
        try
        {
            switch (positional)
            {
                case ["create", var file]:
                    var made = await Backups.CreateAsync(database, file);
                    await stdout.WriteLineAsync($"Backed up {database.FilePath} to {made.File}: {made.Bytes} bytes, audit trail of {made.AuditEntries} entries verified.");
                    return 0;
                case ["restore", var file]:
                    var restored = await Backups.RestoreAsync(database, file, DateTimeOffset.UtcNow);
                    await stdout.WriteLineAsync($"Restored {database.FilePath} from {restored.File} (audit trail of {restored.AuditEntries} entries verified). " +
                        $"The database as it was is kept in {restored.SafetyCopy}.");
                    return 0;
                default:
                    await stderr.WriteLineAsync("usage: backup create <file>     (while the service runs: SQLite's online backup)");
                    await stderr.WriteLineAsync("       backup restore <file>    (with the service stopped; the current database is kept beside it first)");
                    return 2;
            }
        }
        catch (BackupException ex)
        {
            await stderr.WriteLineAsync(ex.Message);
            return 1;
        }
    }

    // users create --role R --name N: a new account with a random password, printed alone on the last line; users list.
    private static async Task<int> UsersAsync(string[] positional, Dictionary<string, string> named, SqliteDatabase database, TextWriter stdout, TextWriter stderr)
    {
        var store = new Data.Users.UserStore(database);
        var accounts = new Auth.UserAccounts(store, TimeProvider.System);
        switch (positional)
        {
            case ["create"] when named.TryGetValue("role", out var role) && named.TryGetValue("name", out var name):
                string password = Auth.UserAccounts.NewPassword();
                try
                {
                    if (await accounts.CreateAsync(name, role, password) is null)
                    {
                        await stderr.WriteLineAsync($"A user named '{name}' exists already.");
                        return 1;
                    }
                }
                catch (ArgumentException ex)
                {
                    await stderr.WriteLineAsync(ex.Message);
                    return 1;
                }

                await stdout.WriteLineAsync($"Created user '{name}' with the role {role} in {database.FilePath}. Their first password (shown once):");
                await stdout.WriteLineAsync(password);
                return 0;
            case ["list"]:
                foreach (var u in await store.ListAsync())
                {
                    string status = u.DisabledAt is not null ? "disabled" : u.LockedUntil is { } l && l > DateTimeOffset.UtcNow ? $"locked until {l:HH:mm} UTC" : u.IsDemo ? "active (demo)" : "active";
                    await stdout.WriteLineAsync($"{u.Name,-32} {u.Role,-12} {u.CreatedAt:yyyy-MM-dd HH:mm}     {status}");
                }

                return 0;
            default:
                await stderr.WriteLineAsync("usage: users create --role <technician|approver|auditor|integration|admin> --name <sign-in name>");
                await stderr.WriteLineAsync("       users list");
                return 2;
        }
    }

    // "--role x --name y" become named values; "--Section:Key=value" settings go on to the configuration.
    private static (string[] Positional, Dictionary<string, string> Named, string[] Settings) Split(string[] args)
    {
        var positional = new List<string>();
        var named = new Dictionary<string, string>(StringComparer.Ordinal);
        var rest = new List<string>();
        for (int i = 0; i < args.Length; i++)
        {
            if (args[i] is "--role" or "--name" or "--holder" && i + 1 < args.Length)
            {
                named[args[i][2..]] = args[++i];
            }
            else if (args[i].StartsWith("--", StringComparison.Ordinal))
            {
                rest.Add(args[i]);
                if (!args[i].Contains('=', StringComparison.Ordinal) && i + 1 < args.Length)
                {
                    rest.Add(args[++i]);
                }
            }
            else
            {
                positional.Add(args[i]);
            }
        }

        return (positional.ToArray(), named, rest.ToArray());
    }
}
