using System.Net;
using System.Text;
using Microsoft.AspNetCore.Http.Metadata;
using Microsoft.AspNetCore.Routing;
using Microsoft.Extensions.DependencyInjection;

namespace CalBudget.Api.Tests;

/// <summary>
/// The role matrix of the HTTP contract (technicians and integrations create and edit; approvers and auditors read;
/// admins manage keys and retire records), written out by hand and checked against every endpoint the service maps:
/// an endpoint missing from the table fails the test, and so does every role answered otherwise than the table says.
/// </summary>
public sealed class RoleMatrixTests : IClassFixture<RoleMatrixTests.Service>
{
    private const string T = "technician", A = "approver", U = "auditor", I = "integration", D = "admin";
    private static readonly string[] Everyone = [T, A, U, I, D];
    private static readonly string[] Writers = [T, I];
    private static readonly string[] Admins = [D];
    private static readonly string[] Approvers = [A];
    private static readonly string[] AuditReaders = [U, D];
    private static readonly string[] Issuers = [T, A, I];

    private readonly Service _service;

    public RoleMatrixTests(Service service) => _service = service;

    /// <summary>Method, route as mapped, a concrete path, a body (JSON unless it starts with "csv:"), and who may call it (null: no key needed).</summary>
    private static readonly (string Method, string Route, string Path, string? Body, string[]? Roles)[] Matrix =
    [
        ("GET", "/health", "/health", null, null),
        ("GET", "/openapi/{documentName}.json", "/openapi/v1.json", null, null),
        ("POST", "/api/v1/budgets/evaluate", "/api/v1/budgets/evaluate", "{}", Everyone),
        ("POST", "/api/v1/stability", "/api/v1/stability", "{}", Everyone),
        ("POST", "/api/v1/orientation/sensitivity", "/api/v1/orientation/sensitivity", "{}", Everyone),
        ("POST", "/api/v1/orientation/shift", "/api/v1/orientation/shift", "{}", Everyone),
        ("POST", "/api/v1/aging/fit", "/api/v1/aging/fit", "{}", Everyone),
        ("GET", "/api/v1/keys", "/api/v1/keys", null, Admins),
        ("POST", "/api/v1/keys", "/api/v1/keys", "{}", Admins),
        ("POST", "/api/v1/keys/{name}/revoke", "/api/v1/keys/nobody/revoke", null, Admins),
        ("GET", "/api/v1/references", "/api/v1/references", null, Everyone),
        ("GET", "/api/v1/references/{id:long}", "/api/v1/references/999", null, Everyone),
        ("POST", "/api/v1/references", "/api/v1/references", "{}", Writers),
        ("PUT", "/api/v1/references/{id:long}", "/api/v1/references/999", "{}", Writers),
        ("POST", "/api/v1/references/{id:long}/retire", "/api/v1/references/999/retire", "{}", Admins),
        ("GET", "/api/v1/instruments", "/api/v1/instruments", null, Everyone),
        ("GET", "/api/v1/instruments/{id:long}", "/api/v1/instruments/999", null, Everyone),
        ("POST", "/api/v1/instruments", "/api/v1/instruments", "{}", Writers),
        ("PUT", "/api/v1/instruments/{id:long}", "/api/v1/instruments/999", "{}", Writers),
        ("POST", "/api/v1/instruments/{id:long}/retire", "/api/v1/instruments/999/retire", "{}", Admins),
        ("GET", "/api/v1/calibrations", "/api/v1/calibrations", null, Everyone),
        ("GET", "/api/v1/calibrations/{id:long}", "/api/v1/calibrations/999", null, Everyone),
        ("POST", "/api/v1/calibrations", "/api/v1/calibrations", "{}", Writers),
        ("PUT", "/api/v1/calibrations/{id:long}", "/api/v1/calibrations/999", "{}", Writers),
        ("POST", "/api/v1/calibrations/{id:long}/retire", "/api/v1/calibrations/999/retire", "{}", Admins),
        ("GET", "/api/v1/calibrations/{id:long}/readings", "/api/v1/calibrations/999/readings", null, Everyone),
        ("POST", "/api/v1/calibrations/{id:long}/readings", "/api/v1/calibrations/999/readings", "csv:timestamp,frequencyHz\n", Writers),
        ("GET", "/api/v1/calibrations/{id:long}/readings/uploads", "/api/v1/calibrations/999/readings/uploads", null, Everyone),
        ("GET", "/api/v1/calibrations/{id:long}/readings/uploads/{uploadId:long}", "/api/v1/calibrations/999/readings/uploads/1", null, Everyone),
        ("GET", "/api/v1/calibrations/{id:long}/readings/uploads/{uploadId:long}/content", "/api/v1/calibrations/999/readings/uploads/1/content", null, Everyone),
        ("GET", "/api/v1/instruments/{id:long}/sensitivity-tests", "/api/v1/instruments/999/sensitivity-tests", null, Everyone),
        ("POST", "/api/v1/instruments/{id:long}/sensitivity-tests", "/api/v1/instruments/999/sensitivity-tests", "{}", Writers),
        ("GET", "/api/v1/templates", "/api/v1/templates", null, Everyone),
        ("GET", "/api/v1/budgets", "/api/v1/budgets", null, Everyone),
        ("GET", "/api/v1/budgets/{id:long}", "/api/v1/budgets/999", null, Everyone),
        ("GET", "/api/v1/budgets/{id:long}/versions", "/api/v1/budgets/999/versions", null, Everyone),
        ("GET", "/api/v1/budgets/{id:long}/versions/{number:int}", "/api/v1/budgets/999/versions/1", null, Everyone),
        ("GET", "/api/v1/budgets/{id:long}/diff", "/api/v1/budgets/999/diff?from=1&to=2", null, Everyone),
        ("POST", "/api/v1/budgets", "/api/v1/budgets", "{}", Writers),
        ("POST", "/api/v1/budgets/{id:long}/versions", "/api/v1/budgets/999/versions", "{}", Writers),
        ("POST", "/api/v1/budgets/{id:long}/versions/{number:int}/approve", "/api/v1/budgets/999/versions/1/approve", "{}", Approvers),
        ("GET", "/api/v1/audit", "/api/v1/audit", null, AuditReaders),
        ("GET", "/api/v1/audit/verify", "/api/v1/audit/verify", null, AuditReaders),
        ("GET", "/api/v1/certificates", "/api/v1/certificates", null, Everyone),
        ("GET", "/api/v1/certificates/{id:long}", "/api/v1/certificates/999", null, Everyone),
        ("GET", "/api/v1/certificates/{id:long}.pdf", "/api/v1/certificates/999.pdf", null, Everyone),
        ("POST", "/api/v1/certificates", "/api/v1/certificates", "{}", Issuers),
        ("POST", "/api/v1/certificates/{id:long}/amend", "/api/v1/certificates/999/amend", "{}", Approvers),
        ("POST", "/api/v1/certificates/{id:long}/withdraw", "/api/v1/certificates/999/withdraw", "{}", Approvers),
    ];

    public static TheoryData<string, string> Routes()
    {
        var data = new TheoryData<string, string>();
        foreach (var row in Matrix)
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
        var listed = Matrix.Select(r => $"{r.Method} {r.Route}").Order(StringComparer.Ordinal).ToArray();
        Assert.Equal(listed, mapped);
    }

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
                var row = Matrix.SingleOrDefault(r => r.Method == verb && Documented(r.Route) == path);
                Assert.True(row.Route is not null, $"{method.ToUpperInvariant()} {path} is documented but not in the matrix");
                var roles = operation!["x-roles"]!.AsArray().Select(r => r!.GetValue<string>()).Order(StringComparer.Ordinal).ToArray();
                Assert.Equal((row.Roles ?? []).Order(StringComparer.Ordinal).ToArray(), roles);
            }
        }

        Assert.Equal(Matrix.Where(r => !r.Route.StartsWith("/openapi", StringComparison.Ordinal)).Select(r => $"{r.Method} {Documented(r.Route)}").Order(StringComparer.Ordinal),
            documented.Order(StringComparer.Ordinal));
    }

    private static string Documented(string route) => System.Text.RegularExpressions.Regex.Replace(route, @"\{(\w+):[^}]+\}", "{$1}");

    [Theory]
    [MemberData(nameof(Routes))]
    public async Task EveryRoleGetsWhatTheMatrixSays(string method, string route)
    {
        var row = Matrix.Single(r => r.Method == method && r.Route == route);
        using (var anonymous = _service.Factory.CreateClient())
        {
            var answer = await SendAsync(anonymous, row);
            if (row.Roles is null)
            {
                Assert.True(answer is not HttpStatusCode.Unauthorized and not HttpStatusCode.Forbidden, $"{method} {route} without a key: {(int)answer}");
                return;
            }

            Assert.True(answer == HttpStatusCode.Unauthorized, $"{method} {route} without a key: {(int)answer}");
        }

        foreach (string role in Everyone)
        {
            var answer = await SendAsync(await _service.ClientAsync(role), row);
            if (row.Roles.Contains(role))
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

    private static async Task<HttpStatusCode> SendAsync(HttpClient client, (string Method, string Route, string Path, string? Body, string[]? Roles) row)
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
                _clients[role] = client = await Factory.ClientAsync(role);
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
