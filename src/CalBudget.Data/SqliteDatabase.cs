using System.Data.Common;
using Dapper;
using Microsoft.Data.Sqlite;

namespace CalBudget.Data;

/// <summary>
/// The embedded SQLite database, one file in the data directory. The file is put in write-ahead-log mode once; every
/// connection then turns on foreign keys, full synchronous commits (an acknowledged write survives a power cut) and a
/// busy timeout so concurrent writers wait instead of failing.
/// </summary>
public sealed class SqliteDatabase : IDbConnectionFactory
{
    /// <summary>The database file's name inside the data directory.</summary>
    public const string FileName = "calbudget.db";

    /// <summary>How long a connection waits for another writer's lock before giving up.</summary>
    public static readonly TimeSpan BusyTimeout = TimeSpan.FromSeconds(10);

    private const string SessionPragmas = "PRAGMA foreign_keys = ON; PRAGMA synchronous = FULL; PRAGMA busy_timeout = 10000;";

    /// <summary>Uses (and creates) the database file in <paramref name="dataDirectory"/>.</summary>
    public SqliteDatabase(string dataDirectory)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(dataDirectory);
        DataDirectory = Path.GetFullPath(dataDirectory);
        Directory.CreateDirectory(DataDirectory);
        FilePath = Path.Combine(DataDirectory, FileName);
        ConnectionString = new SqliteConnectionStringBuilder
        {
            DataSource = FilePath,
            Mode = SqliteOpenMode.ReadWriteCreate,
            Cache = SqliteCacheMode.Private,
            ForeignKeys = true,
            DefaultTimeout = (int)BusyTimeout.TotalSeconds,
            Pooling = true,
        }.ToString();
    }

    /// <summary>The absolute data directory.</summary>
    public string DataDirectory { get; }

    /// <summary>The absolute path of the database file.</summary>
    public string FilePath { get; }

    /// <summary>The connection string (no secrets: a file path and settings).</summary>
    public string ConnectionString { get; }

    /// <inheritdoc />
    public async Task<DbConnection> OpenAsync(CancellationToken cancellationToken = default)
    {
        var connection = new SqliteConnection(ConnectionString);
        try
        {
            await connection.OpenAsync(cancellationToken).ConfigureAwait(false);
            await connection.ExecuteAsync(SessionPragmas).ConfigureAwait(false);
            return connection;
        }
        catch
        {
            await connection.DisposeAsync().ConfigureAwait(false);
            throw;
        }
    }

    /// <summary>Switches the file to write-ahead logging; the mode is stored in the file, so once is enough.</summary>
    public async Task EnableWriteAheadLogAsync(CancellationToken cancellationToken = default)
    {
        await using var connection = await OpenAsync(cancellationToken).ConfigureAwait(false);
        string mode = await connection.ExecuteScalarAsync<string>("PRAGMA journal_mode = WAL;").ConfigureAwait(false) ?? "";
        if (!string.Equals(mode, "wal", StringComparison.OrdinalIgnoreCase))
        {
            throw new InvalidOperationException($"SQLite refused write-ahead logging for {FilePath} (journal mode '{mode}').");
        }
    }
}
