using System.Net;
using System.Text;
using Microsoft.AspNetCore.Http.Metadata;
using Microsoft.AspNetCore.Routing;
using Microsoft.Extensions.DependencyInjection;

namespace CalBudget.Api.Tests;

/// <summary>
/// The role matrix of the HTTP contract (technicians and integrations create and edit; approvers and auditors read;
/// admins manage keys and retire records) as the contributor guide (DEVELOPERS.md, "Roles") states it, checked against
/// every endpoint the service maps and every operation of the OpenAPI document: an endpoint missing from the table fails
/// the test, and so does every role answered otherwise than the table says.
/// </summary>
public sealed class RoleMatrixTests : IClassFixture<RoleMatrixTests.Service>
{
    private static readonly string[] Everyone = ["technician", "approver", "auditor", "integration", "admin"];

    // Who may call each operation ("GET /api/v1/budgets/{id}"), as the contributor guide's table says; null: no key needed.
    private static readonly Lazy<IReadOnlyDictionary<string, string[]?>> Guide = new(() => ContributorGuide.OperationRoles(Everyone));

    private readonly Service _service;

    public RoleMatrixTests(Service service) => _service = service;

    /// <summary>Method, route as mapped, a concrete path and a body (JSON unless it starts with "csv:") for calling each endpoint.</summary>
    private static readonly (string Method, string Route, string Path, string? Body)[] Calls =
    [
        ("GET", "/health", "/health", null),
        ("GET", "/openapi/{documentName}.json", "/openapi/v1.json", null),
        ("POST", "/api/v1/budgets/evaluate", "/api/v1/budgets/evaluate", "{}"),
        ("POST", "/api/v1/stability", "/api/v1/stability", "{}"),
        ("POST", "/api/v1/orientation/sensitivity", "/api/v1/orientation/sensitivity", "{}"),
        ("POST", "/api/v1/orientation/shift", "/api/v1/orientation/shift", "{}"),
        ("POST", "/api/v1/aging/fit", "/api/v1/aging/fit", "{}"),
        ("GET", "/api/v1/keys", "/api/v1/keys", null),
        ("POST", "/api/v1/keys", "/api/v1/keys", "{}"),
        ("POST", "/api/v1/keys/{name}/revoke", "/api/v1/keys/nobody/revoke", null),
        ("GET", "/api/v1/references", "/api/v1/references", null),
        ("GET", "/api/v1/references/{id:long}", "/api/v1/references/999", null),
        ("POST", "/api/v1/references", "/api/v1/references", "{}"),
        ("PUT", "/api/v1/references/{id:long}", "/api/v1/references/999", "{}"),
        ("POST", "/api/v1/references/{id:long}/retire", "/api/v1/references/999/retire", "{}"),
        ("GET", "/api/v1/instruments", "/api/v1/instruments", null),
        ("GET", "/api/v1/instruments/{id:long}", "/api/v1/instruments/999", null),
        ("POST", "/api/v1/instruments", "/api/v1/instruments", "{}"),
        ("PUT", "/api/v1/instruments/{id:long}", "/api/v1/instruments/999", "{}"),
        ("POST", "/api/v1/instruments/{id:long}/retire", "/api/v1/instruments/999/retire", "{}"),
        ("GET", "/api/v1/calibrations", "/api/v1/calibrations", null),
        ("GET", "/api/v1/calibrations/{id:long}", "/api/v1/calibrations/999", null),
        ("POST", "/api/v1/calibrations", "/api/v1/calibrations", "{}"),
        ("PUT", "/api/v1/calibrations/{id:long}", "/api/v1/calibrations/999", "{}"),
        ("POST", "/api/v1/calibrations/{id:long}/retire", "/api/v1/calibrations/999/retire", "{}"),
        ("GET", "/api/v1/calibrations/{id:long}/readings", "/api/v1/calibrations/999/readings", null),
        ("POST", "/api/v1/calibrations/{id:long}/readings", "/api/v1/calibrations/999/readings", "csv:timestamp,frequencyHz\n"),
        ("GET", "/api/v1/calibrations/{id:long}/readings/uploads", "/api/v1/calibrations/999/readings/uploads", null),
        ("GET", "/api/v1/calibrations/{id:long}/readings/uploads/{uploadId:long}", "/api/v1/calibrations/999/readings/uploads/1", null),
        ("GET", "/api/v1/calibrations/{id:long}/readings/uploads/{uploadId:long}/content", "/api/v1/calibrations/999/readings/uploads/1/content", null),
        ("GET", "/api/v1/instruments/{id:long}/sensitivity-tests", "/api/v1/instruments/999/sensitivity-tests", null),
        ("POST", "/api/v1/instruments/{id:long}/sensitivity-tests", "/api/v1/instruments/999/sensitivity-tests", "{}"),
        ("GET", "/api/v1/templates", "/api/v1/templates", null),
        ("GET", "/api/v1/budgets", "/api/v1/budgets", null),
        ("GET", "/api/v1/budgets/{id:long}", "/api/v1/budgets/999", null),
        ("GET", "/api/v1/budgets/{id:long}/versions", "/api/v1/budgets/999/versions", null),
        ("GET", "/api/v1/budgets/{id:long}/versions/{number:int}", "/api/v1/budgets/999/versions/1", null),
        ("GET", "/api/v1/budgets/{id:long}/diff", "/api/v1/budgets/999/diff?from=1&to=2", null),
        ("POST", "/api/v1/budgets", "/api/v1/budgets", "{}"),
        ("POST", "/api/v1/budgets/{id:long}/versions", "/api/v1/budgets/999/versions", "{}"),
        ("POST", "/api/v1/budgets/{id:long}/versions/{number:int}/approve", "/api/v1/budgets/999/versions/1/approve", "{}"),
        ("GET", "/api/v1/audit", "/api/v1/audit", null),
        ("GET", "/api/v1/audit/verify", "/api/v1/audit/verify", null),
        ("GET", "/api/v1/certificates", "/api/v1/certificates", null),
        ("GET", "/api/v1/certificates/{id:long}", "/api/v1/certificates/999", null),
        ("GET", "/api/v1/certificates/{id:long}.pdf", "/api/v1/certificates/999.pdf", null),
        ("POST", "/api/v1/certificates", "/api/v1/certificates", "{}"),
        ("POST", "/api/v1/certificates/{id:long}/amend", "/api/v1/certificates/999/amend", "{}"),
        ("POST", "/api/v1/certificates/{id:long}/withdraw", "/api/v1/certificates/999/withdraw", "{}"),
    ];

    public static TheoryData<string, string> Routes()
    {
        var data = new TheoryData<string, string>();
        foreach (var row in Calls)
        {
            data.Add(row.Method, row.Route);
        }

        return data;
    }

    [Fact]
    public void TheMatrixListsEveryEndpointTheServiceMaps()
    {
        var mapped = _service.Factory.Services.GetRequiredService<EndpointDataSource>().Endpoints.OfType<RouteEndpoint>()
            .Where(e => e.Metadata.GetMetadata<ITagsMetadata>()?.Tags.Contains(CalBudget.Api.Pages.StaffPages.Tag) != true) // PageRoleMatrixTests
            .SelectMany(e => (e.Metadata.GetMetadata<HttpMethodMetadata>()?.HttpMethods ?? ["*"]).Select(m => $"{m} {Normalise(e.RoutePattern.RawText)}"))
            .Order(StringComparer.Ordinal).ToArray();
        var listed = Calls.Select(r => $"{r.Method} {r.Route}").Order(StringComparer.Ordinal).ToArray();
        Assert.Equal(listed, mapped);
    }

    [Fact]
    public void TheContributorGuideHasARowForEveryEndpointAndNoOther()
    {
        var inGuide = Guide.Value.Keys.Order(StringComparer.Ordinal).ToArray();
        var called = Calls.Select(r => $"{r.Method} {Documented(r.Route)}").Order(StringComparer.Ordinal).ToArray();
        Assert.Equal(called, inGuide);
    }

    private static string[]? RolesOf(string method, string route) =>
        Guide.Value.TryGetValue($"{method} {Documented(route)}", out var roles) ? roles
            : throw new Xunit.Sdk.XunitException($"{method} {Documented(route)} has no row in the contributor guide's role table");

    [Fact]
    public async Task TheOpenApiDocumentStatesTheRolesOfTheMatrixForEveryOperation()
    {
        var doc = await Json.ReadAsync(await _service.Factory.CreateClient().GetAsync("/openapi/v1.json"), HttpStatusCode.OK);
        var documented = new List<string>();
        foreach (var (path, item) in doc["paths"]!.AsObject())
        {
            foreach (var (method, operation) in item!.AsObject())
            {
                if (operation?["tags"]?[0]?.GetValue<string>() == CalBudget.Api.Pages.StaffPages.Tag)
                {
                    continue; // the pages' table: PageRoleMatrixTests
                }

                string verb = method.ToUpperInvariant();
                documented.Add($"{verb} {path}");
                Assert.True(Guide.Value.TryGetValue($"{verb} {path}", out var expected), $"{verb} {path} is documented but not in the guide's table");
                var roles = operation!["x-roles"]!.AsArray().Select(r => r!.GetValue<string>()).Order(StringComparer.Ordinal).ToArray();
                Assert.Equal((expected ?? []).Order(StringComparer.Ordinal).ToArray(), roles);
            }
        }

        Assert.Equal(Calls.Where(r => !r.Route.StartsWith("/openapi", StringComparison.Ordinal)).Select(r => $"{r.Method} {Documented(r.Route)}").Order(StringComparer.Ordinal),
            documented.Order(StringComparer.Ordinal));
    }

    private static string Documented(string route) => System.Text.RegularExpressions.Regex.Replace(route, @"\{(\w+):[^}]+\}", "{$1}");

    [Theory]
    [MemberData(nameof(Routes))]
    public async Task EveryRoleGetsWhatTheMatrixSays(string method, string route)
    {
        var row = Calls.Single(r => r.Method == method && r.Route == route);
        var allowed = RolesOf(method, route);
        using (var anonymous = _service.Factory.CreateClient())
        {
            var answer = await SendAsync(anonymous, row);
            if (allowed is null)
            {
                Assert.True(answer is not HttpStatusCode.Unauthorized and not HttpStatusCode.Forbidden, $"{method} {route} without a key: {(int)answer}");
                return;
            }

            Assert.True(answer == HttpStatusCode.Unauthorized, $"{method} {route} without a key: {(int)answer}");
        }

        foreach (string role in Everyone)
        {
            var answer = await SendAsync(await _service.ClientAsync(role), row);
            if (allowed.Contains(role))
            {
                Assert.True(answer is not HttpStatusCode.Unauthorized and not HttpStatusCode.Forbidden, $"{method} {route} as {role}: {(int)answer}, expected access");
            }
            else
            {
                Assert.True(answer == HttpStatusCode.Forbidden, $"{method} {route} as {role}: {(int)answer}, expected 403");
            }
        }
    }

    private static string Normalise(string? raw)
    {
        string route = "/" + (raw ?? "").Trim('/');
        return route.Length > 1 ? route.TrimEnd('/') : route;
    }

    private static async Task<HttpStatusCode> SendAsync(HttpClient client, (string Method, string Route, string Path, string? Body) row)
    {
        using var request = new HttpRequestMessage(new HttpMethod(row.Method), row.Path);
        if (row.Body is { } body)
        {
            request.Content = body.StartsWith("csv:", StringComparison.Ordinal)
                ? new StringContent(body[4..], Encoding.UTF8, "text/csv")
                : Json.Body(body);
        }

        using var response = await client.SendAsync(request);
        return response.StatusCode;
    }

    /// <summary>One service and one client per role for the whole matrix.</summary>
    public sealed class Service : IDisposable
    {
        private readonly Dictionary<string, HttpClient> _clients = [];

        public ServiceFactory Factory { get; } = new();

        public async Task<HttpClient> ClientAsync(string role)
        {
            if (!_clients.TryGetValue(role, out var client))
            {
                _clients[role] = client = await Factory.ClientAsync(role, holder: "person-" + role); // approvals are by named people
            }

            return client;
        }

        public void Dispose()
        {
            foreach (var client in _clients.Values)
            {
                client.Dispose();
            }

            Factory.Dispose();
        }
    }
}
