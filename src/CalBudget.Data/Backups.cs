using Dapper;
using Microsoft.Data.Sqlite;

namespace CalBudget.Data;

/// <summary>What a backup or a restore copied.</summary>
/// <param name="File">The backup file.</param>
/// <param name="Bytes">Its size.</param>
/// <param name="AuditEntries">Entries in its audit trail.</param>
/// <param name="SafetyCopy">On a restore, where the database as it was before is kept.</param>
public sealed record BackupSummary(string File, long Bytes, long AuditEntries, string? SafetyCopy);

/// <summary>A backup that cannot be used: the message says why.</summary>
public sealed class BackupException(string message) : Exception(message);

/// <summary>
/// Online backups with SQLite's backup API (sqlite3_backup, through <see cref="SqliteConnection.BackupDatabase(SqliteConnection)"/>):
/// a consistent copy of the committed state while the service keeps running, and a restore that checks the copy
/// (integrity, schema journal, audit trail) before it replaces anything.
/// </summary>
public static class Backups
{
    /// <summary>Copies the live database to <paramref name="file"/> (which must not exist).</summary>
    public static async Task<BackupSummary> CreateAsync(SqliteDatabase database, string file, CancellationToken ct = default)
    {
        ArgumentNullException.ThrowIfNull(database);
        string target = Path.GetFullPath(file);
        if (File.Exists(target))
        {
            throw new BackupException($"{target} exists already; a backup never overwrites a file.");
        }

        Directory.CreateDirectory(Path.GetDirectoryName(target)!);
        await using (var source = (SqliteConnection)await database.OpenAsync(ct))
        await using (var destination = new SqliteConnection(new SqliteConnectionStringBuilder { DataSource = target, Pooling = false }.ToString()))
        {
            await destination.OpenAsync(ct);
            source.BackupDatabase(destination);
            // the copy is a single self-contained file: no write-ahead log beside it
            await destination.ExecuteAsync("PRAGMA journal_mode = DELETE");
        }

        return new BackupSummary(target, new FileInfo(target).Length, await CheckAsync(target, ct), null);
    }

    /// <summary>
    /// Replaces the database with the backup in <paramref name="file"/>, after checking it; the database as it was is
    /// first copied beside it (calbudget.db.before-restore-...). Run it with the service stopped.
    /// </summary>
    public static async Task<BackupSummary> RestoreAsync(SqliteDatabase database, string file, DateTimeOffset now, CancellationToken ct = default)
    {
        ArgumentNullException.ThrowIfNull(database);
        string source = Path.GetFullPath(file);
        if (!File.Exists(source))
        {
            throw new BackupException($"{source} does not exist.");
        }

        long entries = await CheckAsync(source, ct);
        string safety = $"{database.FilePath}.before-restore-{now.UtcDateTime:yyyyMMdd'T'HHmmss'Z'}";
        await using (var live = (SqliteConnection)await database.OpenAsync(ct))
        {
            await using (var copy = new SqliteConnection(new SqliteConnectionStringBuilder { DataSource = safety, Pooling = false }.ToString()))
            {
                await copy.OpenAsync(ct);
                live.BackupDatabase(copy);
            }

            await using var backup = new SqliteConnection(new SqliteConnectionStringBuilder { DataSource = source, Mode = SqliteOpenMode.ReadOnly, Pooling = false }.ToString());
            await backup.OpenAsync(ct);
            backup.BackupDatabase(live);
        }

        SqliteConnection.ClearAllPools();
        return new BackupSummary(source, new FileInfo(source).Length, entries, safety);
    }

    // integrity_check, the migrations journal, and the audit chain of the copy; the number of audit entries
    private static async Task<long> CheckAsync(string file, CancellationToken ct)
    {
        var folder = Path.Combine(Path.GetTempPath(), "calbudget-check-" + Guid.NewGuid().ToString("N"));
        Directory.CreateDirectory(folder);
        try
        {
            // checked on a copy, so that a read-only or foreign file is never touched
            File.Copy(file, Path.Combine(folder, SqliteDatabase.FileName));
            var copy = new SqliteDatabase(folder);
            await using (var connection = await copy.OpenAsync(ct))
            {
                string integrity = await connection.ExecuteScalarAsync<string>("PRAGMA integrity_check") ?? "";
                if (integrity != "ok")
                {
                    throw new BackupException($"{file} fails SQLite's integrity check: {integrity}");
                }

                long migrations = await connection.ExecuteScalarAsync<long>("SELECT count(*) FROM sqlite_master WHERE name = 'SchemaVersions'");
                if (migrations == 0)
                {
                    throw new BackupException($"{file} is not a CalBudget database (no schema journal).");
                }
            }

            var verification = await new Audit.AuditLog(copy).VerifyAsync(ct);
            if (!verification.Intact)
            {
                throw new BackupException($"{file}: its audit trail does not verify at entry {verification.FirstBadSeq}: {verification.Problem}.");
            }

            return verification.Entries;
        }
        catch (SqliteException ex)
        {
            throw new BackupException($"{file} is not a usable SQLite database: {ex.Message}");
        }
        finally
        {
            SqliteConnection.ClearAllPools();
            Directory.Delete(folder, recursive: true);
        }
    }
}
