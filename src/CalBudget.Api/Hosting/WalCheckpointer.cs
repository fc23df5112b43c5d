using CalBudget.Data;

namespace CalBudget.Api.Hosting;

/// <summary>
/// Copies SQLite's write-ahead log into the database file every <see cref="Interval"/> off the request path (the service's
/// connections do not checkpoint at commit), and empties it on shutdown. A commit is durable once it is in the log.
/// </summary>
public sealed class WalCheckpointer(SqliteDatabase database, ILogger<WalCheckpointer> log) : BackgroundService
{
    /// <summary>How often the log is copied.</summary>
    public static readonly TimeSpan Interval = TimeSpan.FromSeconds(2);

    /// <inheritdoc />
    public override async Task StopAsync(CancellationToken cancellationToken)
    {
        await base.StopAsync(cancellationToken);
        try
        {
            await database.CheckpointAsync(truncate: true, cancellationToken);
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
                    await database.CheckpointAsync(truncate: false, stoppingToken);
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
