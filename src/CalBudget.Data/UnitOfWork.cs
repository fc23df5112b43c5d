using System.Data;
using System.Data.Common;

namespace CalBudget.Data;

/// <summary>
/// One connection and one transaction for a request that writes; every repository call of the request takes it, and
/// nothing is visible to others until <see cref="CommitAsync"/>. Disposed without a commit, everything is rolled back.
/// </summary>
public sealed class UnitOfWork : IAsyncDisposable
{
    private bool _committed;

    private UnitOfWork(DbConnection connection, DbTransaction transaction)
    {
        Connection = connection;
        Transaction = transaction;
    }

    /// <summary>The connection.</summary>
    public DbConnection Connection { get; }

    /// <summary>The transaction.</summary>
    public DbTransaction Transaction { get; }

    /// <summary>Opens a connection and begins a serializable transaction (for SQLite, BEGIN IMMEDIATE: the write lock is taken up front).</summary>
    public static async Task<UnitOfWork> BeginAsync(IDbConnectionFactory database, CancellationToken ct = default)
    {
        ArgumentNullException.ThrowIfNull(database);
        var connection = await database.OpenAsync(ct).ConfigureAwait(false);
        try
        {
            var transaction = await connection.BeginTransactionAsync(IsolationLevel.Serializable, ct).ConfigureAwait(false);
            return new UnitOfWork(connection, transaction);
        }
        catch
        {
            await connection.DisposeAsync().ConfigureAwait(false);
            throw;
        }
    }

    /// <summary>Makes the work durable.</summary>
    public async Task CommitAsync(CancellationToken ct = default)
    {
        await Transaction.CommitAsync(ct).ConfigureAwait(false);
        _committed = true;
    }

    /// <inheritdoc />
    public async ValueTask DisposeAsync()
    {
        if (!_committed)
        {
            await Transaction.RollbackAsync().ConfigureAwait(false);
        }

        await Transaction.DisposeAsync().ConfigureAwait(false);
        await Connection.DisposeAsync().ConfigureAwait(false);
    }
}
