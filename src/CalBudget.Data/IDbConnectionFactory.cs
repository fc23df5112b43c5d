using System.Data.Common;

namespace CalBudget.Data;

/// <summary>
/// The one place that opens database connections. Repositories take it and never build connection strings, so a
/// server database can replace SQLite by supplying another factory (and its migrations) without touching the domain.
/// </summary>
public interface IDbConnectionFactory
{
    /// <summary>Opens a connection with the session settings the service relies on (foreign keys, durability, busy waits).</summary>
    Task<DbConnection> OpenAsync(CancellationToken cancellationToken = default);
}
