using System.Text.Json.Nodes;
using CalBudget.Api.Auth;
using Microsoft.AspNetCore.Authorization;
using Microsoft.OpenApi;

namespace CalBudget.Api.OpenApi;

/// <summary>
/// The OpenAPI 3 document at <c>/openapi/v1.json</c>. Each operation that needs a key carries the bearer security
/// requirement, an <c>x-roles</c> list of the roles it admits and a line saying so in its description.
/// </summary>
public static class OpenApiSetup
{
    private const string Scheme = "apiKey";
    private const string CookieScheme = "staffCookie";

    /// <summary>Registers the document and its transformers.</summary>
    public static IServiceCollection AddCalBudgetOpenApi(this IServiceCollection services) =>
        services.AddOpenApi("v1", options =>
        {
            options.AddDocumentTransformer((document, _, _) =>
            {
                document.Info = new OpenApiInfo
                {
                    Title = "CalBudget",
                    Version = "1",
                    Description = "Timebase calibration budgets (GUM, JCGM 101), stability, orientation and certificates. " +
                        "Fractional frequency is dimensionless; times are RFC 3339 UTC; errors are RFC 9457 problem details " +
                        "(400 malformed, 401 no valid key, 403 role not admitted, 404, 405, 409 conflict, 412 stale If-Match, " +
                        "413 too large, 415 not JSON, 422 well formed but not computable). Results support, and never replace, " +
                        "the laboratory's accredited procedures and the judgement of its authorised signatories.",
                };
                document.Components ??= new OpenApiComponents();
                document.Components.SecuritySchemes ??= new Dictionary<string, IOpenApiSecurityScheme>();
                document.Components.SecuritySchemes[Scheme] = new OpenApiSecurityScheme
                {
                    Type = SecuritySchemeType.Http,
                    Scheme = "bearer",
                    Description = "An API key made with 'keys create' or by an admin: Authorization: Bearer <key>.",
                };
                document.Components.SecuritySchemes[CookieScheme] = new OpenApiSecurityScheme
                {
                    Type = SecuritySchemeType.ApiKey,
                    In = ParameterLocation.Cookie,
                    Name = "calbudget.staff",
                    Description = "The staff pages' session cookie, set by POST /sign-in (user accounts, not API keys).",
                };
                return Task.CompletedTask;
            });
            options.AddOperationTransformer((operation, _, _) =>
            {
                // CSV bodies are text, whatever the JSON schema of the same operation's other media type
                var csv = new List<OpenApiMediaType>();
                if (operation.RequestBody?.Content?.TryGetValue("text/csv", out var body) == true)
                {
                    csv.Add(body);
                }

                foreach (var response in operation.Responses?.Values.AsEnumerable() ?? [])
                {
                    if (response.Content is { } content && content.TryGetValue("text/csv", out var text))
                    {
                        csv.Add(text);
                    }
                }
                foreach (var media in csv)
                {
                    media.Schema = new OpenApiSchema { Type = JsonSchemaType.String, Description = "CSV (UTF-8) with a header row; see the operation's description." };
                }

                return Task.CompletedTask;
            });
            options.AddOperationTransformer((operation, context, _) =>
            {
                var metadata = context.Description.ActionDescriptor.EndpointMetadata;
                if (metadata.OfType<IAllowAnonymous>().Any())
                {
                    operation.Extensions ??= new Dictionary<string, IOpenApiExtension>();
                    operation.Extensions["x-roles"] = new JsonNodeExtension(new JsonArray());
                    operation.Description = Append(operation.Description, "No key needed.");
                    return Task.CompletedTask;
                }

                var policies = metadata.OfType<IAuthorizeData>().Select(a => a.Policy).OfType<string>().ToArray();
                var pagePolicies = policies.Where(Pages.PagePolicies.RolesFrom.ContainsKey).ToArray();
                if (pagePolicies.Length > 0)
                {
                    // a page: the most restrictive of its group's and its own policies
                    var admitted = pagePolicies.Select(p => Policies.RolesOf(Pages.PagePolicies.RolesFrom[p])).Aggregate((a, b) => [.. a.Intersect(b)]);
                    operation.Security = [new OpenApiSecurityRequirement { [new OpenApiSecuritySchemeReference(CookieScheme, context.Document)] = [] }];
                    operation.Extensions ??= new Dictionary<string, IOpenApiExtension>();
                    operation.Extensions["x-roles"] = new JsonNodeExtension(new JsonArray(admitted.Select(r => (JsonNode)JsonValue.Create(r)).ToArray()));
                    operation.Description = Append(operation.Description, $"Roles: {string.Join(", ", admitted)}.");
                    operation.Responses ??= new OpenApiResponses();
                    operation.Responses.TryAdd("302", new OpenApiResponse { Description = "Not signed in: to /sign-in (or, after a form, to the next page)." });
                    operation.Responses.TryAdd("403", new OpenApiResponse { Description = $"Signed in with a role other than {string.Join(", ", admitted)}: the 'not allowed' page." });
                    return Task.CompletedTask;
                }

                var roles = policies.Where(Policies.All.ContainsKey).SelectMany(Policies.RolesOf).Distinct().ToArray();
                if (roles.Length == 0)
                {
                    return Task.CompletedTask;
                }

                operation.Security = [new OpenApiSecurityRequirement { [new OpenApiSecuritySchemeReference(Scheme, context.Document)] = [] }];
                operation.Extensions ??= new Dictionary<string, IOpenApiExtension>();
                operation.Extensions["x-roles"] = new JsonNodeExtension(new JsonArray(roles.Select(r => (JsonNode)JsonValue.Create(r)).ToArray()));
                operation.Description = Append(operation.Description, $"Roles: {string.Join(", ", roles)}.");
                operation.Responses ??= new OpenApiResponses();
                operation.Responses.TryAdd("401", new OpenApiResponse { Description = "No key, or an unknown or revoked one (problem details)." });
                operation.Responses.TryAdd("403", new OpenApiResponse { Description = $"The key's role is not one of: {string.Join(", ", roles)} (problem details)." });
                return Task.CompletedTask;
            });
        });

    private static string Append(string? description, string line) =>
        string.IsNullOrEmpty(description) ? line : description + "\n\n" + line;
}
