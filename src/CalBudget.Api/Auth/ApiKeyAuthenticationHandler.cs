using System.Security.Claims;
using System.Text.Encodings.Web;
using CalBudget.Data.Keys;
using Microsoft.AspNetCore.Authentication;
using Microsoft.AspNetCore.Authorization;
using Microsoft.AspNetCore.Mvc;
using Microsoft.Extensions.Options;

namespace CalBudget.Api.Auth;

/// <summary>
/// <c>Authorization: Bearer &lt;api key&gt;</c>. A missing, malformed, unknown or revoked key is 401; a valid key whose role
/// the endpoint's policy does not admit is 403. Both answers are problem details. The key is never logged.
/// </summary>
public sealed class ApiKeyAuthenticationHandler(
    IOptionsMonitor<AuthenticationSchemeOptions> options, ILoggerFactory logger, UrlEncoder encoder,
    ApiKeyStore keys, IProblemDetailsService problems)
    : AuthenticationHandler<AuthenticationSchemeOptions>(options, logger, encoder)
{
    /// <summary>The scheme's name.</summary>
    public const string SchemeName = "ApiKey";

    /// <inheritdoc />
    protected override async Task<AuthenticateResult> HandleAuthenticateAsync()
    {
        string? header = Request.Headers.Authorization;
        if (string.IsNullOrEmpty(header))
        {
            return AuthenticateResult.NoResult();
        }

        if (!header.StartsWith("Bearer ", StringComparison.OrdinalIgnoreCase))
        {
            return AuthenticateResult.Fail("The Authorization header is not a bearer key.");
        }

        var identity = await keys.AuthenticateAsync(header["Bearer ".Length..].Trim(), Context.RequestAborted);
        if (identity is null)
        {
            return AuthenticateResult.Fail("Unknown or revoked key.");
        }

        var principal = new ClaimsPrincipal(new ClaimsIdentity(
            [new Claim(ClaimTypes.Name, identity.Name), new Claim(ClaimTypes.Role, identity.Role), new Claim(Hosting.Conventions.HolderClaim, identity.Holder),
                new Claim(Hosting.Conventions.HolderNamedClaim, identity.HolderNamed ? "true" : "false")], SchemeName));
        return AuthenticateResult.Success(new AuthenticationTicket(principal, SchemeName));
    }

    /// <inheritdoc />
    protected override async Task HandleChallengeAsync(AuthenticationProperties properties)
    {
        Response.StatusCode = StatusCodes.Status401Unauthorized;
        Response.Headers.WWWAuthenticate = "Bearer";
        var result = await HandleAuthenticateOnceSafeAsync();
        string detail = result.None
            ? "Send an API key as 'Authorization: Bearer <key>'."
            : "The API key is not valid: it is unknown, revoked or malformed.";
        await problems.TryWriteAsync(new ProblemDetailsContext
        {
            HttpContext = Context,
            ProblemDetails = new ProblemDetails { Status = 401, Title = "Authentication is required.", Detail = detail },
        });
    }

    /// <inheritdoc />
    protected override async Task HandleForbiddenAsync(AuthenticationProperties properties)
    {
        Response.StatusCode = StatusCodes.Status403Forbidden;
        var policies = Context.GetEndpoint()?.Metadata.GetOrderedMetadata<IAuthorizeData>().Select(a => a.Policy).OfType<string>() ?? [];
        var allowed = policies.Where(Policies.All.ContainsKey).SelectMany(Policies.RolesOf).Distinct().ToArray();
        string role = Context.User.FindFirstValue(ClaimTypes.Role) ?? "none";
        await problems.TryWriteAsync(new ProblemDetailsContext
        {
            HttpContext = Context,
            ProblemDetails = new ProblemDetails
            {
                Status = 403,
                Title = "This key's role may not do this.",
                Detail = $"The key has the role '{role}'; this operation needs one of: {string.Join(", ", allowed)}.",
            },
        });
    }
}
