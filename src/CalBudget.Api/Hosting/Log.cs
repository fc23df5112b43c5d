namespace CalBudget.Api.Hosting;

/// <summary>The service's log messages (source-generated, structured). None of them ever carries a key, password or cookie.</summary>
internal static partial class Log
{
    [LoggerMessage(1, LogLevel.Error, "Unhandled error on {Method} {Path}")]
    public static partial void UnhandledError(ILogger logger, Exception exception, string method, string path);

    [LoggerMessage(2, LogLevel.Warning, "Health check: the database did not answer")]
    public static partial void DatabaseUnreachable(ILogger logger, Exception exception);

    [LoggerMessage(3, LogLevel.Debug, "Migration: {Message}")]
    public static partial void Migration(ILogger logger, string message);

    [LoggerMessage(4, LogLevel.Information, "Database {File}: {Count} migration(s) applied")]
    public static partial void DatabaseReady(ILogger logger, string file, int count);

    [LoggerMessage(5, LogLevel.Warning, "New Development database: demo keys and demo records seeded (demo only; see the README)")]
    public static partial void DemoKeysSeeded(ILogger logger);

    [LoggerMessage(6, LogLevel.Warning, "Write-ahead log checkpoint failed; it is retried")]
    public static partial void CheckpointFailed(ILogger logger, Exception exception);

    [LoggerMessage(7, LogLevel.Debug, "Write-ahead log at {Pages} pages: emptied {Emptied}")]
    public static partial void LogEmptied(ILogger logger, long pages, bool emptied);
}
