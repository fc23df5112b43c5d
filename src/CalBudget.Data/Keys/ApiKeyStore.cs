using System.Security.Cryptography;
using System.Text;
using Dapper;

namespace CalBudget.Data.Keys;

/// <summary>A key as listed: never the key itself.</summary>
/// <param name="Name">Unique label.</param>
/// <param name="Role">One of <see cref="Roles.All"/>.</param>
/// <param name="KeyId">The public identifier inside the key (not a secret).</param>
/// <param name="CreatedAt">When it was made (UTC).</param>
/// <param name="RevokedAt">When it was revoked, or null while valid.</param>
/// <param name="IsDemo">Seeded demo key (Development only).</param>
public sealed record ApiKeyInfo(string Name, string Role, string KeyId, DateTimeOffset CreatedAt, DateTimeOffset? RevokedAt, bool IsDemo);

/// <summary>Who a valid key belongs to.</summary>
/// <param name="Name">The key's label, used as the actor.</param>
/// <param name="Role">Its role.</param>
/// <param name="Holder">The person who holds it (several keys may share one).</param>
/// <param name="HolderNamed">False when no holder was named, so that the key's name stands in for a person nobody can identify.</param>
public sealed record ApiKeyIdentity(string Name, string Role, string Holder, bool HolderNamed = true);

/// <summary>Why a key operation was refused.</summary>
public enum ApiKeyProblem
{
    /// <summary>A name or role that is not allowed.</summary>
    Invalid,
    /// <summary>No key has that name.</summary>
    NotFound,
    /// <summary>The name is taken, or the key is revoked already.</summary>
    Conflict,
}

/// <summary>Raised when a key cannot be created or revoked as asked.</summary>
public sealed class ApiKeyException(ApiKeyProblem problem, string message) : Exception(message)
{
    /// <summary>Why.</summary>
    public ApiKeyProblem Problem { get; } = problem;
}

/// <summary>
/// API keys: <c>cbk_</c> + a 16-hex-digit key id + <c>_</c> + a secret of 256 random bits (base64url). The store keeps the id,
/// a random 16-byte salt and SHA-256(salt || secret); a fast hash is enough because the secret has full entropy (it
/// cannot be guessed from a dictionary), and the comparison takes constant time.
/// </summary>
/// <remarks>
/// Verified keys are remembered for <see cref="CacheLifetime"/> so that a request does not need a database round trip;
/// the secret is still hashed and compared on every request. A revocation through this store takes effect at once; one
/// made by another process (the command line) within the cache lifetime.
/// </remarks>
public sealed class ApiKeyStore(IDbConnectionFactory database, TimeProvider time)
{
    private const string Prefix = "cbk_";
    private const int KeyIdLength = 16;
    private const int CacheLimit = 10_000;
    private readonly System.Collections.Concurrent.ConcurrentDictionary<string, CachedKey> _cache = new(StringComparer.Ordinal);

    /// <summary>How long a verified key is remembered; zero turns the cache off. Five seconds unless configured.</summary>
    public TimeSpan CacheLifetime { get; init; } = TimeSpan.FromSeconds(5);

    /// <summary>The person behind the key named <paramref name="name"/> (its holder, else the name itself).</summary>
    public static async Task<string> PersonAsync(UnitOfWork work, string name)
    {
        ArgumentNullException.ThrowIfNull(work);
        return await work.Connection.ExecuteScalarAsync<string?>("SELECT coalesce(holder, name) FROM api_keys WHERE name = @name", new { name }, work.Transaction)
            ?? name;
    }

    /// <summary>Makes a new key for <paramref name="role"/> and returns it; it is shown this once and never stored.</summary>
    public async Task<string> CreateAsync(string name, string role, string actor = CommandLineActor, string? holder = null, CancellationToken ct = default)
    {
        string keyId = Convert.ToHexStringLower(RandomNumberGenerator.GetBytes(KeyIdLength / 2));
        string secret = Base64Url(RandomNumberGenerator.GetBytes(32));
        await InsertAsync(name, role, keyId, secret, isDemo: false, actor, ct, holder).ConfigureAwait(false);
        return Prefix + keyId + "_" + secret;
    }

    /// <summary>Stores a key whose value is fixed in advance (the Development demo keys listed in the README).</summary>
    public Task InsertDemoKeyAsync(string name, string role, string key, string? holder = null, CancellationToken ct = default)
    {
        if (!TryParse(key, out string keyId, out string secret))
        {
            throw new ApiKeyException(ApiKeyProblem.Invalid, "The demo key is not in the key format.");
        }

        return InsertAsync(name, role, keyId, secret, isDemo: true, "demo-seed", ct, holder);
    }

    private const string InsertSql = """
        INSERT INTO api_keys (key_id, name, role, holder, salt, secret_hash, is_demo, created_at)
        VALUES (@keyId, @name, @role, @holder, @salt, @hash, @isDemo, @createdAt)
        """;

    /// <summary>The audit trail's actor for changes made with the command line.</summary>
    public const string CommandLineActor = "command line";

    private async Task InsertAsync(string name, string role, string keyId, string secret, bool isDemo, string actor, CancellationToken ct, string? holder = null)
    {
        holder = string.IsNullOrWhiteSpace(holder) ? null : holder.Trim();
        if (holder is { Length: > 100 } || holder?.Any(char.IsControl) == true)
        {
            throw new ApiKeyException(ApiKeyProblem.Invalid, "A holder is 1 to 100 printable characters.");
        }

        name = (name ?? "").Trim();
        if (name.Length is 0 or > 100 || name.Any(char.IsControl))
        {
            throw new ApiKeyException(ApiKeyProblem.Invalid, "A key needs a name of 1 to 100 printable characters.");
        }

        if (!Roles.IsKnown(role))
        {
            throw new ApiKeyException(ApiKeyProblem.Invalid, $"Unknown role '{role}'; the roles are {string.Join(", ", Roles.All)}.");
        }

        byte[] salt = RandomNumberGenerator.GetBytes(16);
        await using var work = await UnitOfWork.BeginAsync(database, ct).ConfigureAwait(false);
        if (await work.Connection.ExecuteScalarAsync<long>("SELECT count(*) FROM api_keys WHERE name = @name", new { name }, work.Transaction).ConfigureAwait(false) > 0)
        {
            throw new ApiKeyException(ApiKeyProblem.Conflict, $"A key named '{name}' exists already.");
        }

        var now = time.GetUtcNow();
        await work.Connection.ExecuteAsync(new CommandDefinition(InsertSql, new
        {
            keyId,
            name,
            role,
            holder,
            salt,
            hash = Hash(salt, secret),
            isDemo = isDemo ? 1 : 0,
            createdAt = Timestamps.Format(now),
        }, work.Transaction, cancellationToken: ct)).ConfigureAwait(false);
        // the audit state names the key and its role, never its secret or hash
        await Audit.AuditLog.AppendAsync(work, now, actor, "create", "key", name, null,
            System.Text.Json.JsonSerializer.Serialize(new { name, role, holder = holder ?? name, keyId, isDemo, createdAt = Timestamps.Format(now) })).ConfigureAwait(false);
        await work.CommitAsync(ct).ConfigureAwait(false);
    }

    private const string FindSql = "SELECT name, role, coalesce(holder, name) AS holder, salt, secret_hash AS secretHash, revoked_at AS revokedAt, holder IS NOT NULL AS holderNamed FROM api_keys WHERE key_id = @keyId";

    /// <summary>The identity behind <paramref name="key"/>, or null when it is malformed, unknown or revoked.</summary>
    public async Task<ApiKeyIdentity?> AuthenticateAsync(string key, CancellationToken ct = default)
    {
        if (!TryParse(key, out string keyId, out string secret))
        {
            return null;
        }

        long now = time.GetTimestamp();
        if (_cache.TryGetValue(keyId, out var cached) && now < cached.ExpiresAt)
        {
            return CryptographicOperations.FixedTimeEquals(Hash(cached.Salt, secret), cached.SecretHash) ? cached.Identity : null;
        }

        await using var connection = await database.OpenAsync(ct).ConfigureAwait(false);
        var row = await connection.QuerySingleOrDefaultAsync<KeyRow>(new CommandDefinition(FindSql, new { keyId }, cancellationToken: ct)).ConfigureAwait(false);
        if (row is null || row.RevokedAt is not null)
        {
            _cache.TryRemove(keyId, out _);
            return null;
        }

        if (!CryptographicOperations.FixedTimeEquals(Hash(row.Salt, secret), row.SecretHash))
        {
            return null;
        }

        var identity = new ApiKeyIdentity(row.Name, row.Role, row.Holder, row.HolderNamed != 0);
        if (CacheLifetime > TimeSpan.Zero && _cache.Count < CacheLimit)
        {
            long expires = now + (long)(CacheLifetime.TotalSeconds * time.TimestampFrequency);
            _cache[keyId] = new CachedKey(identity, row.Salt, row.SecretHash, expires);
        }

        return identity;
    }

    private const string ListSql = """
        SELECT name, role, key_id AS keyId, created_at AS createdAt, revoked_at AS revokedAt, is_demo AS isDemo
        FROM api_keys ORDER BY name
        """;

    /// <summary>Every key, revoked ones too, by name.</summary>
    public async Task<IReadOnlyList<ApiKeyInfo>> ListAsync(CancellationToken ct = default)
    {
        await using var connection = await database.OpenAsync(ct).ConfigureAwait(false);
        var rows = await connection.QueryAsync<ListRow>(new CommandDefinition(ListSql, cancellationToken: ct)).ConfigureAwait(false);
        return rows.Select(r => new ApiKeyInfo(r.Name, r.Role, r.KeyId, Timestamps.Parse(r.CreatedAt),
            r.RevokedAt is null ? null : Timestamps.Parse(r.RevokedAt), r.IsDemo != 0)).ToArray();
    }

    private const string RevokeSql = "UPDATE api_keys SET revoked_at = @now WHERE name = @name AND revoked_at IS NULL";

    /// <summary>Revokes the key named <paramref name="name"/>; it answers 401 from then on.</summary>
    public async Task RevokeAsync(string name, string actor = CommandLineActor, CancellationToken ct = default)
    {
        await using var work = await UnitOfWork.BeginAsync(database, ct).ConfigureAwait(false);
        var connection = work.Connection;
        var now = time.GetUtcNow();
        int changed = await connection.ExecuteAsync(new CommandDefinition(RevokeSql, new { name, now = Timestamps.Format(now) }, work.Transaction, cancellationToken: ct)).ConfigureAwait(false);
        foreach (var entry in _cache.Where(e => e.Value.Identity.Name == name))
        {
            _cache.TryRemove(entry.Key, out _);
        }

        if (changed == 0)
        {
            bool exists = await connection.ExecuteScalarAsync<long>("SELECT count(*) FROM api_keys WHERE name = @name", new { name }, work.Transaction).ConfigureAwait(false) > 0;
            throw exists
                ? new ApiKeyException(ApiKeyProblem.Conflict, $"The key '{name}' is revoked already.")
                : new ApiKeyException(ApiKeyProblem.NotFound, $"No key is named '{name}'.");
        }

        await Audit.AuditLog.AppendAsync(work, now, actor, "revoke", "key", name, null,
            System.Text.Json.JsonSerializer.Serialize(new { name, revokedAt = Timestamps.Format(now) })).ConfigureAwait(false);
        await work.CommitAsync(ct).ConfigureAwait(false);
    }

    internal static bool TryParse(string? key, out string keyId, out string secret)
    {
        keyId = secret = "";
        if (key is null || key.Length < Prefix.Length + KeyIdLength + 2 || key.Length > 200
            || !key.StartsWith(Prefix, StringComparison.Ordinal) || key[Prefix.Length + KeyIdLength] != '_')
        {
            return false;
        }

        keyId = key.Substring(Prefix.Length, KeyIdLength);
        secret = key[(Prefix.Length + KeyIdLength + 1)..];
        return keyId.All(char.IsAsciiHexDigitLower) && secret.All(c => char.IsAsciiLetterOrDigit(c) || c is '-' or '_');
    }

    private static byte[] Hash(byte[] salt, string secret)
    {
        byte[] s = Encoding.UTF8.GetBytes(secret);
        byte[] buffer = new byte[salt.Length + s.Length];
        salt.CopyTo(buffer, 0);
        s.CopyTo(buffer, salt.Length);
        return SHA256.HashData(buffer);
    }

    private static string Base64Url(byte[] bytes) => Convert.ToBase64String(bytes).TrimEnd('=').Replace('+', '-').Replace('/', '_');

    private sealed record CachedKey(ApiKeyIdentity Identity, byte[] Salt, byte[] SecretHash, long ExpiresAt);

    private sealed record KeyRow(string Name, string Role, string Holder, byte[] Salt, byte[] SecretHash, string? RevokedAt, long HolderNamed);

    private sealed record ListRow(string Name, string Role, string KeyId, string CreatedAt, string? RevokedAt, long IsDemo);
}
