using CalBudget.Data;
using Dapper;
using Microsoft.Data.Sqlite;

namespace CalBudget.Api.Tests;

/// <summary>
/// The bound on SQLite's write-ahead log (Hosting/WalCheckpointer): a passive checkpoint copies the log but, while a reader
/// holds a snapshot, cannot start it again; the TRUNCATE checkpoint the service asks for past the limit waits only as long
/// as it is told, says when it could not finish, and empties the log once the reader is gone. Nothing committed is lost.
/// </summary>
public sealed class WriteAheadLogTests : IDisposable
{
    private readonly TempFolder _folder = new("calbudget-wal-");

    public void Dispose() => _folder.Dispose();

    [Fact]
    public async Task TheLogIsEmptiedOnceNoReaderHoldsItAndNoWriteIsLost()
    {
        var database = new SqliteDatabase(_folder.Path, backgroundCheckpoints: true);
        await database.EnableWriteAheadLogAsync();
        await using (var setup = await database.OpenAsync())
        {
            await setup.ExecuteAsync("CREATE TABLE notes (id INTEGER PRIMARY KEY, text TEXT NOT NULL);");
        }

        async Task WriteAsync(int from, int count)
        {
            await using var connection = await database.OpenAsync();
            await using var tx = await connection.BeginTransactionAsync();
            for (int i = from; i < from + count; i++)
            {
                await connection.ExecuteAsync("INSERT INTO notes (id, text) VALUES (@i, @text);", new { i, text = new string('n', 500) }, tx);
            }

            await tx.CommitAsync();
        }

        await WriteAsync(0, 2_000);

        // a reader in the middle of a read transaction, on a snapshot that lies in the log
        await using var reader = await database.OpenAsync();
        await using var snapshot = ((SqliteConnection)reader).BeginTransaction(deferred: true);
        Assert.Equal(2_000, await reader.ExecuteScalarAsync<long>("SELECT COUNT(*) FROM notes;", transaction: snapshot));
        await WriteAsync(2_000, 2_000);

        var passive = await database.CheckpointAsync(truncate: false);
        Assert.True(passive.LogPages > 0);
        var started = DateTime.UtcNow;
        var blocked = await database.CheckpointAsync(truncate: true, TimeSpan.FromMilliseconds(200));
        Assert.False(blocked.Complete);
        Assert.True(DateTime.UtcNow - started < TimeSpan.FromSeconds(5), "the wait is bounded");
        Assert.True(new FileInfo(database.FilePath + "-wal").Length > 0);

        await snapshot.CommitAsync();
        var emptied = await database.CheckpointAsync(truncate: true, TimeSpan.FromMilliseconds(200));
        Assert.True(emptied.Complete);
        Assert.Equal(0, new FileInfo(database.FilePath + "-wal").Length);

        await using var check = await database.OpenAsync();
        Assert.Equal(4_000, await check.ExecuteScalarAsync<long>("SELECT COUNT(*) FROM notes;"));
        Assert.Equal("ok", await check.ExecuteScalarAsync<string>("PRAGMA integrity_check;"));
        Assert.Equal(10_000, await check.ExecuteScalarAsync<long>("PRAGMA busy_timeout;")); // the pooled connection's usual timeout is back
    }
}
