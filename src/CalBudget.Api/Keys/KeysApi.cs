using System.Security.Claims;
using CalBudget.Api.Auth;
using CalBudget.Api.Hosting;
using CalBudget.Data.Keys;
using Microsoft.AspNetCore.Http.HttpResults;

namespace CalBudget.Api.Keys;

/// <summary>A key as listed: never its secret.</summary>
/// <param name="Name">Label.</param>
/// <param name="Role">Role.</param>
/// <param name="KeyId">Public identifier inside the key.</param>
/// <param name="CreatedAt">RFC 3339 UTC.</param>
/// <param name="RevokedAt">RFC 3339 UTC, or null.</param>
/// <param name="Demo">A Development demo key.</param>
public sealed record ApiKeyDto(string Name, string Role, string KeyId, DateTimeOffset CreatedAt, DateTimeOffset? RevokedAt, bool Demo);

/// <summary>A key to make.</summary>
/// <param name="Name">Unique label, 1 to 100 characters.</param>
/// <param name="Role">technician, approver, auditor, integration or admin.</param>
/// <param name="Holder">The person who holds it, when one person holds several keys (default: the name); budget approval compares holders.</param>
public sealed record CreateKeyRequest(string? Name, string? Role, string? Holder = null);

/// <summary>A new key: the only time its value is shown.</summary>
/// <param name="Name">Label.</param>
/// <param name="Role">Role.</param>
/// <param name="Key">The key; store it now.</param>
public sealed record CreatedKeyDto(string Name, string Role, string Key);

/// <summary>Key management for administrators under <c>/api/v1/keys</c> (the same as the <c>keys</c> command line).</summary>
public static class KeysApi
{
    /// <summary>Maps the routes.</summary>
    public static IEndpointRouteBuilder MapKeysApi(this IEndpointRouteBuilder routes)
    {
        var group = routes.MapGroup("/api/v1/keys").WithTags("Keys").RequireAuthorization(Policies.Admin);
        group.MapGet("/", List).WithName("ListKeys").WithSummary("List API keys (never their values)");
        group.MapPost("/", Create).WithName("CreateKey").WithSummary("Make an API key; its value is in this answer only")
            .WithDescription("Not replayable with Idempotency-Key: the key's value is never stored, so it cannot be shown twice. A second request with the same name is 409.")
            .Accepts<CreateKeyRequest>("application/json")
            .ProducesValidationProblem(StatusCodes.Status400BadRequest).ProducesProblem(StatusCodes.Status409Conflict);
        group.MapPost("/{name}/revoke", Revoke).WithName("RevokeKey").WithSummary("Revoke an API key; it answers 401 from then on")
            .ProducesProblem(StatusCodes.Status404NotFound).ProducesProblem(StatusCodes.Status409Conflict);
        return routes;
    }

    /// <summary>GET /api/v1/keys.</summary>
    public static async Task<Ok<ApiKeyDto[]>> List(ApiKeyStore store, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(store);
        var keys = await store.ListAsync(ct);
        return TypedResults.Ok(keys.Select(k => new ApiKeyDto(k.Name, k.Role, k.KeyId, k.CreatedAt, k.RevokedAt, k.IsDemo)).ToArray());
    }

    /// <summary>POST /api/v1/keys.</summary>
    public static async Task<Results<Created<CreatedKeyDto>, ProblemHttpResult>> Create(CreateKeyRequest request, ApiKeyStore store, ClaimsPrincipal user, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(request);
        ArgumentNullException.ThrowIfNull(store);
        var errors = new FieldErrors();
        string? name = errors.Text(request.Name, "name", 100);
        if (!Roles.IsKnown(request.Role))
        {
            errors.Add("role", $"One of {string.Join(", ", Roles.All)}.");
        }

        if (!errors.IsEmpty || name is null)
        {
            return Problems.Invalid(errors.ToDictionary());
        }

        try
        {
            string key = await store.CreateAsync(name, request.Role!, Conventions.Actor(user), request.Holder, ct);
            return TypedResults.Created($"/api/v1/keys/{Uri.EscapeDataString(name)}", new CreatedKeyDto(name, request.Role!, key));
        }
        catch (ApiKeyException ex)
        {
            return ex.Problem == ApiKeyProblem.Invalid
                ? Problems.Invalid(new Dictionary<string, string[]> { ["name"] = [ex.Message] })
                : Problems.Status(StatusCodes.Status409Conflict, "The key cannot be made.", ex.Message);
        }
    }

    /// <summary>POST /api/v1/keys/{name}/revoke.</summary>
    public static async Task<Results<NoContent, ProblemHttpResult>> Revoke(string name, ApiKeyStore store, ClaimsPrincipal user, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(store);
        ArgumentNullException.ThrowIfNull(user);
        try
        {
            await store.RevokeAsync(name, Conventions.Actor(user), ct);
            return TypedResults.NoContent();
        }
        catch (ApiKeyException ex)
        {
            bool missing = ex.Problem == ApiKeyProblem.NotFound;
            return Problems.Status(missing ? StatusCodes.Status404NotFound : StatusCodes.Status409Conflict,
                missing ? "No such key." : "The key cannot be revoked.", ex.Message);
        }
    }
}
