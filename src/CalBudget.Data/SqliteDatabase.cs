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

    private static readonly string BusyTimeoutPragma = string.Create(System.Globalization.CultureInfo.InvariantCulture, $"PRAGMA busy_timeout = {(long)BusyTimeout.TotalMilliseconds};");
    private static readonly string SessionPragmas = "PRAGMA foreign_keys = ON; PRAGMA synchronous = FULL; " + BusyTimeoutPragma;
    private const string NoAutoCheckpoint = " PRAGMA wal_autocheckpoint = 0;";
    private readonly string _pragmas;

    // The native connections the pragmas have been run on: a pooled connection keeps its settings, so they are set once
    // per native connection rather than on every open (which cost about a tenth of a millisecond per request).
    private readonly System.Runtime.CompilerServices.ConditionalWeakTable<object, object> _prepared = [];

    /// <summary>Uses (and creates) the database file in <paramref name="dataDirectory"/>.</summary>
    /// <param name="dataDirectory">The folder of the file.</param>
    /// <param name="backgroundCheckpoints">
    /// True when the owner calls <see cref="CheckpointAsync"/> on a schedule: commits then only append to the write-ahead log
    /// (made durable by synchronous=FULL) and never copy it into the database file themselves, which on a slow disk would
    /// double the time of a large write. False: SQLite checkpoints at commit, as it does by default.
    /// </param>
    public SqliteDatabase(string dataDirectory, bool backgroundCheckpoints = false)
    {
        _pragmas = backgroundCheckpoints ? SessionPragmas + NoAutoCheckpoint : SessionPragmas;
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
            object handle = connection.Handle!;
            if (!_prepared.TryGetValue(handle, out _))
            {
                await connection.ExecuteAsync(_pragmas).ConfigureAwait(false);
                _prepared.AddOrUpdate(handle, handle);
            }

            return connection;
        }
        catch
        {
            await connection.DisposeAsync().ConfigureAwait(false);
            throw;
        }
    }

    /// <summary>
    /// Copies the write-ahead log into the database file as far as readers allow (PASSIVE), or all of it and empties the log
    /// (TRUNCATE, waiting for readers and writers up to <paramref name="wait"/>, by default the busy timeout; meanwhile new
    /// writers wait). Returns whether it did all it was asked, the log's size and how much was copied, in pages.
    /// </summary>
    public async Task<(bool Complete, long LogPages, long CopiedPages)> CheckpointAsync(bool truncate, TimeSpan? wait = null,
        CancellationToken cancellationToken = default)
    {
        await using var connection = await OpenAsync(cancellationToken).ConfigureAwait(false);
        if (wait is { } bound)
        {
            await connection.ExecuteAsync($"PRAGMA busy_timeout = {(long)bound.TotalMilliseconds:D};").ConfigureAwait(false);
        }

        try
        {
            var row = await connection.QuerySingleAsync<(long Busy, long Log, long Copied)>(
                truncate ? "PRAGMA wal_checkpoint(TRUNCATE);" : "PRAGMA wal_checkpoint(PASSIVE);").ConfigureAwait(false);
            return (row.Busy == 0 && (!truncate || row.Log == 0), row.Log, row.Copied);
        }
        finally
        {
            if (wait is not null)
            {
                // the connection goes back to the pool with the session's usual timeout
                await connection.ExecuteAsync(BusyTimeoutPragma).ConfigureAwait(false);
            }
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
