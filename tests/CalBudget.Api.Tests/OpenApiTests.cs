using System.Net;
using System.Text.Json.Nodes;
using Microsoft.AspNetCore.Routing;
using Microsoft.Extensions.DependencyInjection;

namespace CalBudget.Api.Tests;

public sealed class OpenApiTests : IDisposable
{
    private readonly ServiceFactory _factory = new();

    public void Dispose() => _factory.Dispose();

    private async Task<JsonNode> Document() => await Json.ReadAsync(await _factory.CreateClient().GetAsync("/openapi/v1.json"), HttpStatusCode.OK);

    [Fact]
    public async Task TheDocumentIsOpenApi3()
    {
        var doc = await Document();
        Assert.StartsWith("3.", doc["openapi"]!.GetValue<string>(), StringComparison.Ordinal);
        Assert.Equal("bearer", doc["components"]!["securitySchemes"]!["apiKey"]!["scheme"]!.GetValue<string>());
    }

    [Fact]
    public async Task EveryMappedEndpointIsInTheDocumentWithItsRoles()
    {
        var doc = await Document();
        var paths = doc["paths"]!.AsObject();
        var endpoints = _factory.Services.GetRequiredService<EndpointDataSource>().Endpoints.OfType<RouteEndpoint>()
            .Where(e => e.RoutePattern.RawText is { } raw && !raw.StartsWith("/openapi", StringComparison.Ordinal))
            .SelectMany(e => (e.Metadata.GetMetadata<HttpMethodMetadata>()?.HttpMethods ?? []).Select(m => (Path: "/" + e.RoutePattern.RawText!.TrimStart('/').TrimEnd('/'), Method: m.ToLowerInvariant())))
            .ToArray();
        Assert.NotEmpty(endpoints);
        foreach (var (path, method) in endpoints)
        {
            // route constraints ({id:long}) are not part of the documented path
            string documented = System.Text.RegularExpressions.Regex.Replace(path, @"\{(\w+):[^}]+\}", "{$1}");
            Assert.True(paths.ContainsKey(documented), $"{path} is not in the OpenAPI document");
            var operation = paths[documented]![method];
            Assert.True(operation is not null, $"{method.ToUpperInvariant()} {path} is not in the OpenAPI document");
            Assert.True(operation!["x-roles"] is JsonArray, $"{method.ToUpperInvariant()} {path} does not state its roles");
            Assert.True(operation["responses"]!.AsObject().Count > 0);
            if (operation["x-roles"]!.AsArray().Count > 0 && operation["tags"]![0]!.GetValue<string>() == CalBudget.Api.Pages.StaffPages.Tag)
            {
                Assert.NotNull(operation["responses"]!["302"]); // a page sends the signed-out to /sign-in
                Assert.NotNull(operation["responses"]!["403"]);
                Assert.NotNull(operation["security"]);
            }
            else if (operation["x-roles"]!.AsArray().Count > 0)
            {
                Assert.NotNull(operation["responses"]!["401"]);
                Assert.NotNull(operation["responses"]!["403"]);
                Assert.NotNull(operation["security"]);
            }
        }
    }

    [Fact]
    public async Task EvaluateDocumentsItsRequestResponsesAndRoles()
    {
        var op = (await Document())["paths"]!["/api/v1/budgets/evaluate"]!["post"]!;
        Assert.NotNull(op["requestBody"]!["content"]!["application/json"]);
        foreach (string status in new[] { "200", "400", "401", "403", "413", "415", "422" })
        {
            Assert.NotNull(op["responses"]![status]);
        }

        Assert.Equal(5, op["x-roles"]!.AsArray().Count);
        Assert.Contains("copula", op["description"]!.GetValue<string>(), StringComparison.Ordinal);
    }

    [Fact]
    public async Task ReadingsDocumentBothFormatsAndTheCsvColumns()
    {
        var path = (await Document())["paths"]!["/api/v1/calibrations/{id}/readings"]!;
        var upload = path["post"]!;
        Assert.Equal("string", upload["requestBody"]!["content"]!["text/csv"]!["schema"]!["type"]!.GetValue<string>());
        Assert.NotEqual("string", upload["requestBody"]!["content"]!["application/json"]!["schema"]!["type"]?.GetValue<string>());
        foreach (string status in new[] { "201", "400", "404", "409", "413", "415", "422" })
        {
            Assert.NotNull(upload["responses"]![status]);
        }

        foreach (string column in new[] { "timestamp", "frequencyHz", "fractionalOffset", "gateTimeSeconds", "reason" })
        {
            Assert.Contains(column, upload["description"]!.GetValue<string>(), StringComparison.Ordinal);
        }

        Assert.Equal(["technician", "integration"], upload["x-roles"]!.AsArray().Select(r => r!.GetValue<string>()));
        var table = path["get"]!["responses"]!["200"]!["content"]!;
        Assert.Equal("string", table["text/csv"]!["schema"]!["type"]!.GetValue<string>());
        Assert.NotEqual("string", table["application/json"]!["schema"]!["type"]?.GetValue<string>());
        Assert.NotNull(path["get"]!["responses"]!["406"]);
    }
}
