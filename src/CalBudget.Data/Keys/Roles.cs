namespace CalBudget.Data.Keys;

/// <summary>The roles of the HTTP contract (API.md): what a key or a user may do.</summary>
public static class Roles
{
    /// <summary>Records runs and readings, builds budgets.</summary>
    public const string Technician = "technician";

    /// <summary>Approves budget versions and certificates.</summary>
    public const string Approver = "approver";

    /// <summary>Reads everything, changes nothing.</summary>
    public const string Auditor = "auditor";

    /// <summary>A LIMS or other system: creates and reads records.</summary>
    public const string Integration = "integration";

    /// <summary>Manages keys and users, retires records.</summary>
    public const string Admin = "admin";

    /// <summary>Every role, in a fixed order.</summary>
    public static IReadOnlyList<string> All { get; } = [Technician, Approver, Auditor, Integration, Admin];

    /// <summary>True when <paramref name="role"/> is one of <see cref="All"/> (exact, lower case).</summary>
    public static bool IsKnown(string? role) => role is not null && All.Contains(role, StringComparer.Ordinal);
}
