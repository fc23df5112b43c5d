using CalBudget.Data.Keys;

namespace CalBudget.Api.Auth;

/// <summary>
/// The authorization policies, each a set of roles; route groups require one of them. <see cref="RolesOf"/> feeds the
/// OpenAPI document and the role matrix in DEVELOPERS.md.
/// </summary>
public static class Policies
{
    /// <summary>Any valid key, whatever its role.</summary>
    public const string AnyRole = "any-role";

    /// <summary>Administrators only.</summary>
    public const string Admin = "admin";

    /// <summary>Those who create and edit records: technicians and integrations.</summary>
    public const string Writer = "writer";

    /// <summary>Those who read the audit trail: auditors and administrators.</summary>
    public const string AuditReader = "audit-reader";

    /// <summary>Those who approve budgets.</summary>
    public const string Approver = "approver";

    /// <summary>Issuing certificates: technicians, integrations and approvers.</summary>
    public const string Issuer = "issuer";

    private static readonly Dictionary<string, string[]> Definitions = new(StringComparer.Ordinal)
    {
        [AnyRole] = [.. Roles.All],
        [Admin] = [Roles.Admin],
        [Writer] = [Roles.Technician, Roles.Integration],
        [AuditReader] = [Roles.Auditor, Roles.Admin],
        [Approver] = [Roles.Approver],
        [Issuer] = [Roles.Technician, Roles.Integration, Roles.Approver],
    };

    /// <summary>Every policy name with its roles.</summary>
    public static IReadOnlyDictionary<string, string[]> All => Definitions;

    /// <summary>The roles a policy admits.</summary>
    public static IReadOnlyList<string> RolesOf(string policy) => Definitions[policy];
}
