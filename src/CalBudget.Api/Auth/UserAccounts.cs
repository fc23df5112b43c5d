using System.Security.Claims;
using System.Security.Cryptography;
using CalBudget.Data.Keys;
using CalBudget.Data.Users;
using Microsoft.AspNetCore.Identity;

namespace CalBudget.Api.Auth;

/// <summary>What a sign-in attempt came to.</summary>
public enum SignInOutcome
{
    /// <summary>Signed in.</summary>
    Success,
    /// <summary>Unknown name or wrong password (not told apart, on purpose).</summary>
    Refused,
    /// <summary>Too many failures: locked for a while.</summary>
    LockedOut,
}

/// <summary>
/// User accounts for the staff pages: passwords hashed and checked with ASP.NET Core Identity's <see cref="PasswordHasher{TUser}"/>
/// (PBKDF2), lock-out after <see cref="MaxFailures"/> failures for <see cref="LockOut"/>, the principal for the cookie.
/// </summary>
public sealed class UserAccounts(UserStore store, TimeProvider time)
{
    /// <summary>Failures before the account is locked.</summary>
    public const int MaxFailures = 5;

    /// <summary>The cookie scheme of the staff pages.</summary>
    public const string CookieScheme = "StaffCookie";

    /// <summary>How long a lock-out lasts.</summary>
    public static readonly TimeSpan LockOut = TimeSpan.FromMinutes(15);

    private static readonly PasswordHasher<UserAccount> Hasher = new();

    /// <summary>Demo users for Development (public, in the README): name, role, password.</summary>
    public static IReadOnlyList<(string Name, string Role, string Password)> DemoUsers { get; } =
    [
        ("tech", Roles.Technician, "demo-technician-password"),
        ("approver", Roles.Approver, "demo-approver-password"),
        ("auditor", Roles.Auditor, "demo-auditor-password"),
        ("admin", Roles.Admin, "demo-admin-password"),
    ];

    /// <summary>Creates an account (audited as made by <paramref name="actor"/>); returns null when the name is taken. The password must be 12 to 200 characters.</summary>
    public async Task<string?> CreateAsync(string name, string role, string password, bool isDemo = false, string actor = ApiKeyStore.CommandLineActor,
        CancellationToken ct = default)
    {
        if (string.IsNullOrWhiteSpace(name) || name.Length > 100 || name.Any(char.IsControl))
        {
            throw new ArgumentException("A user name is 1 to 100 printable characters.", nameof(name));
        }

        if (!Roles.IsKnown(role))
        {
            throw new ArgumentException($"Unknown role '{role}'; one of {string.Join(", ", Roles.All)}.", nameof(role));
        }

        if (password.Length is < 12 or > 200)
        {
            throw new ArgumentException("A password is 12 to 200 characters.", nameof(password));
        }

        string hash = Hasher.HashPassword(null!, password);
        return await store.CreateAsync(name.Trim(), role, hash, isDemo, time.GetUtcNow(), actor, ct) ? name.Trim() : null;
    }

    /// <summary>A random password of 20 characters (about 120 bits).</summary>
    public static string NewPassword() => Convert.ToBase64String(RandomNumberGenerator.GetBytes(15)).Replace('+', '-').Replace('/', '_');

    /// <summary>Checks a sign-in; on success the principal for the cookie.</summary>
    public async Task<(SignInOutcome Outcome, ClaimsPrincipal? Principal, DateTimeOffset? LockedUntil)> SignInAsync(string name, string password, CancellationToken ct = default)
    {
        var now = time.GetUtcNow();
        var user = string.IsNullOrWhiteSpace(name) ? null : await store.FindAsync(name.Trim(), ct);
        if (user is null || user.DisabledAt is not null)
        {
            Hasher.VerifyHashedPassword(null!, DummyHash, password ?? ""); // the same work as for a real account
            return (SignInOutcome.Refused, null, null);
        }

        if (user.LockedUntil is { } until && until > now)
        {
            return (SignInOutcome.LockedOut, null, until);
        }

        var result = Hasher.VerifyHashedPassword(user, user.PasswordHash, password ?? "");
        if (result == PasswordVerificationResult.Failed)
        {
            await store.FailedAsync(user.Id, MaxFailures, now + LockOut, ct);
            return user.FailedAttempts + 1 >= MaxFailures ? (SignInOutcome.LockedOut, null, now + LockOut) : (SignInOutcome.Refused, null, null);
        }

        await store.SucceededAsync(user.Id, result == PasswordVerificationResult.SuccessRehashNeeded ? Hasher.HashPassword(user, password!) : null, ct);
        var identity = new ClaimsIdentity([new Claim(ClaimTypes.Name, user.Name), new Claim(ClaimTypes.Role, user.Role), new Claim(Hosting.Conventions.HolderClaim, user.Name)],
            CookieScheme);
        return (SignInOutcome.Success, new ClaimsPrincipal(identity), null);
    }

    private static readonly string DummyHash = Hasher.HashPassword(null!, "not a password of anyone");
}
