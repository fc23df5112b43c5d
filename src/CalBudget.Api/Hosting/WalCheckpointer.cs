using CalBudget.Data;

namespace CalBudget.Api.Hosting;

/// <summary>
/// Copies SQLite's write-ahead log into the database file every <see cref="Interval"/> off the request path (the service's
/// connections do not checkpoint at commit), and empties it on shutdown. A commit is durable once it is in the log.
/// Under constant readers the passive copy never finds a moment to start the log again, so once the log passes
/// <see cref="LogPagesLimit"/> the tick asks for a TRUNCATE checkpoint that waits at most <see cref="TruncateWait"/>
/// for the readers of the moment to finish (writers wait that long too); if they do not, the next tick tries again.
/// </summary>
public sealed class WalCheckpointer(SqliteDatabase database, ILogger<WalCheckpointer> log) : BackgroundService
{
    /// <summary>How often the log is copied.</summary>
    public static readonly TimeSpan Interval = TimeSpan.FromSeconds(2);

    /// <summary>The log's size, in pages, past which it is emptied (16,384 pages of 4 KiB: 64 MiB).</summary>
    public const long LogPagesLimit = 16_384;

    /// <summary>How long emptying the log may wait for readers and hold up writers.</summary>
    public static readonly TimeSpan TruncateWait = TimeSpan.FromMilliseconds(200);

    /// <inheritdoc />
    public override async Task StopAsync(CancellationToken cancellationToken)
    {
        await base.StopAsync(cancellationToken);
        try
        {
            await database.CheckpointAsync(truncate: true, cancellationToken: cancellationToken);
        }
        catch (Exception ex) when (ex is Microsoft.Data.Sqlite.SqliteException or OperationCanceledException)
        {
            Log.CheckpointFailed(log, ex);
        }
    }

    /// <inheritdoc />
    protected override async Task ExecuteAsync(CancellationToken stoppingToken)
    {
        using var timer = new PeriodicTimer(Interval);
        try
        {
            while (await timer.WaitForNextTickAsync(stoppingToken))
            {
                try
                {
                    var copied = await database.CheckpointAsync(truncate: false, cancellationToken: stoppingToken);
                    if (copied.LogPages > LogPagesLimit)
                    {
                        var emptied = await database.CheckpointAsync(truncate: true, TruncateWait, stoppingToken);
                        Log.LogEmptied(log, copied.LogPages, emptied.Complete);
                    }
                }
                catch (Microsoft.Data.Sqlite.SqliteException ex)
                {
                    // the log stays as it is; the next tick tries again
                    Log.CheckpointFailed(log, ex);
                }
            }
        }
        catch (OperationCanceledException) when (stoppingToken.IsCancellationRequested)
        {
            // shutting down
        }
    }
}
