using Dapper;

namespace CalBudget.Data.Users;

/// <summary>A person who signs in to the staff pages.</summary>
/// <param name="Id">Its id.</param>
/// <param name="Name">The sign-in name (unique, case-insensitive).</param>
/// <param name="Role">One of <see cref="Keys.Roles"/>.</param>
/// <param name="PasswordHash">The password hash (ASP.NET Core Identity format).</param>
/// <param name="FailedAttempts">Failures since the last success.</param>
/// <param name="LockedUntil">Locked out until then.</param>
/// <param name="IsDemo">A public demo account (Development only).</param>
/// <param name="CreatedAt">When.</param>
/// <param name="DisabledAt">When disabled.</param>
public sealed record UserAccount(long Id, string Name, string Role, string PasswordHash, int FailedAttempts, DateTimeOffset? LockedUntil, bool IsDemo,
    DateTimeOffset CreatedAt, DateTimeOffset? DisabledAt);

/// <summary>User accounts: create, find, record sign-in outcomes, disable. Hashing is the caller's (the host's password hasher).</summary>
public sealed class UserStore(IDbConnectionFactory database)
{
    private const string Columns = """
        id, name, role, password_hash AS passwordHash, failed_attempts AS failedAttempts, locked_until AS lockedUntil, is_demo AS isDemo,
        created_at AS createdAt, disabled_at AS disabledAt
        """;

    /// <summary>Adds an account, in the audit trail as made by <paramref name="actor"/>; false when the name is taken.</summary>
    public async Task<bool> CreateAsync(string name, string role, string passwordHash, bool isDemo, DateTimeOffset now, string actor, CancellationToken ct = default)
    {
        await using var work = await UnitOfWork.BeginAsync(database, ct);
        if (await work.Connection.ExecuteScalarAsync<long>("SELECT count(*) FROM users WHERE name = @name", new { name }, work.Transaction) > 0)
        {
            return false;
        }

        await work.Connection.ExecuteAsync(
            "INSERT INTO users (name, role, password_hash, is_demo, created_at) VALUES (@name, @role, @passwordHash, @isDemo, @now)",
            new { name, role, passwordHash, isDemo, now = Timestamps.Format(now) }, work.Transaction);
        await Audit.AuditLog.AppendAsync(work, now, actor, "create", "user", name, null,
            System.Text.Json.JsonSerializer.Serialize(new { name, role, isDemo }));
        await work.CommitAsync(ct);
        return true;
    }

    /// <summary>The account, or null.</summary>
    public async Task<UserAccount?> FindAsync(string name, CancellationToken ct = default)
    {
        await using var connection = await database.OpenAsync(ct);
        var row = await connection.QuerySingleOrDefaultAsync<Row>(new CommandDefinition($"SELECT {Columns} FROM users WHERE name = @name", new { name }, cancellationToken: ct));
        return row?.ToModel();
    }

    /// <summary>Every account, by name.</summary>
    public async Task<IReadOnlyList<UserAccount>> ListAsync(CancellationToken ct = default)
    {
        await using var connection = await database.OpenAsync(ct);
        var rows = await connection.QueryAsync<Row>(new CommandDefinition($"SELECT {Columns} FROM users ORDER BY name", cancellationToken: ct));
        return rows.Select(r => r.ToModel()).ToArray();
    }

    /// <summary>A failed sign-in: counts it, and locks the account until <paramref name="lockUntil"/> when it reaches <paramref name="limit"/>.</summary>
    public async Task FailedAsync(long id, int limit, DateTimeOffset lockUntil, CancellationToken ct = default)
    {
        await using var connection = await database.OpenAsync(ct);
        await connection.ExecuteAsync(new CommandDefinition("""
            UPDATE users SET failed_attempts = failed_attempts + 1,
                             locked_until = CASE WHEN failed_attempts + 1 >= @limit THEN @lockUntil ELSE locked_until END
            WHERE id = @id
            """, new { id, limit, lockUntil = Timestamps.Format(lockUntil) }, cancellationToken: ct));
    }

    /// <summary>A successful sign-in: clears the failures and, when given, stores a rehashed password.</summary>
    public async Task SucceededAsync(long id, string? newHash, CancellationToken ct = default)
    {
        await using var connection = await database.OpenAsync(ct);
        await connection.ExecuteAsync(new CommandDefinition(
            "UPDATE users SET failed_attempts = 0, locked_until = NULL, password_hash = coalesce(@newHash, password_hash) WHERE id = @id",
            new { id, newHash }, cancellationToken: ct));
    }

    private sealed class Row
    {
        public long Id { get; init; }
        public string Name { get; init; } = "";
        public string Role { get; init; } = "";
        public string PasswordHash { get; init; } = "";
        public long FailedAttempts { get; init; }
        public string? LockedUntil { get; init; }
        public bool IsDemo { get; init; }
        public string CreatedAt { get; init; } = "";
        public string? DisabledAt { get; init; }

        public UserAccount ToModel() => new(Id, Name, Role, PasswordHash, (int)FailedAttempts, LockedUntil is null ? null : Timestamps.Parse(LockedUntil), IsDemo,
            Timestamps.Parse(CreatedAt), DisabledAt is null ? null : Timestamps.Parse(DisabledAt));
    }
}
