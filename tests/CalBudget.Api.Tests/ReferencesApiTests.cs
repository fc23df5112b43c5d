using System.Net;
using System.Net.Http.Headers;
using System.Text.Json.Nodes;

namespace CalBudget.Api.Tests;

public sealed class ReferencesApiTests : IDisposable
{
    private const string Path = "/api/v1/references";
    private readonly ServiceFactory _factory = new();

    public void Dispose() => _factory.Dispose();

    // An invented lab's rubidium standard (demo-style data, not a check value).
    private static string Body(string identity = "RB-01", int dueInDays = 300, double u = 2e-12, string kind = "rubidium") => $$"""
    { "identity": "{{identity}}", "kind": "{{kind}}", "description": "bench rubidium, rack 2", "nominalFrequencyHz": 10000000,
      "calibration": { "certificateNumber": "NMI-2026-0417", "issuingLab": "Regional time laboratory", "date": "{{DateTimeOffset.UtcNow.AddDays(-60):O}}",
                       "fractionalOffset": 1.5e-12, "expandedUncertainty": {{u}}, "coverageFactor": 2, "driftPerDay": 1e-14, "driftUncertaintyPerDay": 2e-15 },
      "dueDate": "{{DateTimeOffset.UtcNow.AddDays(dueInDays):O}}" }
    """;

    private static async Task<(JsonNode Node, string ETag, Uri Location)> CreateAsync(HttpClient client, string body)
    {
        using var response = await client.PostAsync(Path, Json.Body(body));
        var node = await Json.ReadAsync(response, HttpStatusCode.Created);
        return (node, response.Headers.ETag!.Tag, response.Headers.Location!);
    }

    [Fact]
    public async Task CreateReadAndUpdateWithETags()
    {
        var tech = await _factory.ClientAsync("technician");
        var (created, etag, location) = await CreateAsync(tech, Body());
        Assert.Equal("\"1\"", etag);
        Assert.Equal($"{Path}/{created["id"]}", location.ToString());
        Assert.Equal("in calibration", created["status"]!.GetValue<string>());
        Assert.True(created["usable"]!.GetValue<bool>());
        Assert.StartsWith("technician-", created["createdBy"]!.GetValue<string>(), StringComparison.Ordinal);

        using var read = await tech.GetAsync(location);
        Assert.Equal(etag, read.Headers.ETag!.Tag);

        var update = new HttpRequestMessage(HttpMethod.Put, location) { Content = Json.Body(Body(u: 3e-12)) };
        update.Headers.IfMatch.Add(new EntityTagHeaderValue(etag));
        using var updated = await tech.SendAsync(update);
        var node = await Json.ReadAsync(updated, HttpStatusCode.OK);
        Assert.Equal("\"2\"", updated.Headers.ETag!.Tag);
        Assert.Equal(3e-12, Json.Number(node["calibration"]!["expandedUncertainty"]));
    }

    [Fact]
    public async Task AStaleIfMatchIs412AndAMissingOneIs428()
    {
        var tech = await _factory.ClientAsync("technician");
        var (_, etag, location) = await CreateAsync(tech, Body());
        async Task<HttpResponseMessage> Put(string? ifMatch)
        {
            var request = new HttpRequestMessage(HttpMethod.Put, location) { Content = Json.Body(Body(u: 4e-12)) };
            if (ifMatch is not null)
            {
                request.Headers.TryAddWithoutValidation("If-Match", ifMatch);
            }

            return await tech.SendAsync(request);
        }

        await Json.ReadAsync(await Put(etag), HttpStatusCode.OK);
        // a second client still holding version 1 loses: exactly one update wins, nothing is overwritten
        await Json.ProblemAsync(await Put(etag), HttpStatusCode.PreconditionFailed);
        await Json.ProblemAsync(await Put(null), (HttpStatusCode)428);
        var current = await Json.ReadAsync(await tech.GetAsync(location), HttpStatusCode.OK);
        Assert.Equal(2, current["version"]!.GetValue<long>());
    }

    [Fact]
    public async Task AnIdempotencyKeyReplaysTheFirstAnswer()
    {
        var lims = await _factory.ClientAsync("integration");
        string body = Body("GNSS-7", kind: "gnss-disciplined");
        async Task<HttpResponseMessage> Post(string content)
        {
            var request = new HttpRequestMessage(HttpMethod.Post, Path) { Content = Json.Body(content) };
            request.Headers.Add("Idempotency-Key", "wo-88231");
            return await lims.SendAsync(request);
        }

        using var first = await Post(body);
        var a = await Json.ReadAsync(first, HttpStatusCode.Created);
        using var second = await Post(body);
        var b = await Json.ReadAsync(second, HttpStatusCode.Created);
        Assert.Equal(a.ToJsonString(), b.ToJsonString());
        Assert.Equal(first.Headers.Location, second.Headers.Location);
        var list = await Json.ReadAsync(await lims.GetAsync(Path), HttpStatusCode.OK);
        Assert.Single(list["items"]!.AsArray());

        var problem = await Json.ProblemAsync(await Post(Body("GNSS-8", kind: "gnss-disciplined")), HttpStatusCode.UnprocessableEntity);
        Assert.Contains("Idempotency-Key", Json.ErrorFields(problem));
    }

    [Fact]
    public async Task ListsPageInAStableOrderWithFilters()
    {
        var tech = await _factory.ClientAsync("technician");
        for (int i = 1; i <= 5; i++)
        {
            await CreateAsync(tech, Body($"RB-{i:00}", kind: i % 2 == 0 ? "ocxo" : "rubidium"));
        }

        var seen = new List<string>();
        string? cursor = null;
        int pages = 0;
        do
        {
            var page = await Json.ReadAsync(await tech.GetAsync($"{Path}?limit=2" + (cursor is null ? "" : $"&cursor={cursor}")), HttpStatusCode.OK);
            seen.AddRange(page["items"]!.AsArray().Select(n => n!["identity"]!.GetValue<string>()));
            cursor = page["nextCursor"]?.GetValue<string>();
            pages++;
        }
        while (cursor is not null);
        Assert.Equal(3, pages);
        Assert.Equal(["RB-01", "RB-02", "RB-03", "RB-04", "RB-05"], seen);

        var ocxo = await Json.ReadAsync(await tech.GetAsync($"{Path}?kind=ocxo"), HttpStatusCode.OK);
        Assert.Equal(2, ocxo["items"]!.AsArray().Count);
        var text = await Json.ReadAsync(await tech.GetAsync($"{Path}?text=RB-03"), HttpStatusCode.OK);
        Assert.Single(text["items"]!.AsArray());
        var percent = await Json.ReadAsync(await tech.GetAsync($"{Path}?text=%25"), HttpStatusCode.OK);
        Assert.Empty(percent["items"]!.AsArray()); // LIKE metacharacters are matched literally

        Assert.Contains("cursor", Json.ErrorFields(await Json.ProblemAsync(await tech.GetAsync($"{Path}?cursor=not-ours"), HttpStatusCode.BadRequest)));
        Assert.Contains("limit", Json.ErrorFields(await Json.ProblemAsync(await tech.GetAsync($"{Path}?limit=0"), HttpStatusCode.BadRequest)));
        Assert.Contains("kind", Json.ErrorFields(await Json.ProblemAsync(await tech.GetAsync($"{Path}?kind=sundial"), HttpStatusCode.BadRequest)));
    }

    [Fact]
    public async Task DueSoonOverdueAndRetiredReferencesSaySo()
    {
        var tech = await _factory.ClientAsync("technician");
        var admin = await _factory.ClientAsync("admin");
        var (soon, _, _) = await CreateAsync(tech, Body("RB-SOON", dueInDays: 10));
        Assert.Equal("due soon", soon["status"]!.GetValue<string>());
        Assert.True(soon["usable"]!.GetValue<bool>());

        var (_, etag, location) = await CreateAsync(tech, Body("RB-OLD", dueInDays: 100));
        var retire = new HttpRequestMessage(HttpMethod.Post, $"{location}/retire") { Content = Json.Body("""{"reason":"replaced by RB-02"}""") };
        retire.Headers.IfMatch.Add(new EntityTagHeaderValue(etag));
        var retired = await Json.ReadAsync(await admin.SendAsync(retire), HttpStatusCode.OK);
        Assert.Equal("retired", retired["status"]!.GetValue<string>());
        Assert.False(retired["usable"]!.GetValue<bool>());

        var edit = new HttpRequestMessage(HttpMethod.Put, location) { Content = Json.Body(Body("RB-OLD")) };
        edit.Headers.TryAddWithoutValidation("If-Match", "*");
        await Json.ProblemAsync(await tech.SendAsync(edit), HttpStatusCode.Conflict);
        // retired records stay on record, listed when asked for
        var all = await Json.ReadAsync(await tech.GetAsync($"{Path}?includeRetired=true"), HttpStatusCode.OK);
        Assert.Equal(2, all["items"]!.AsArray().Count);
        var active = await Json.ReadAsync(await tech.GetAsync(Path), HttpStatusCode.OK);
        Assert.Single(active["items"]!.AsArray());
    }

    [Fact]
    public async Task RolesAreEnforced()
    {
        var tech = await _factory.ClientAsync("technician");
        var (_, etag, location) = await CreateAsync(tech, Body());
        foreach (var role in new[] { "approver", "auditor", "admin" })
        {
            var client = await _factory.ClientAsync(role);
            await Json.ReadAsync(await client.GetAsync(location), HttpStatusCode.OK);
            if (role != "admin")
            {
                await Json.ProblemAsync(await client.PostAsync(Path, Json.Body(Body("X-" + role))), HttpStatusCode.Forbidden);
            }
        }

        var retire = new HttpRequestMessage(HttpMethod.Post, $"{location}/retire") { Content = Json.Body("""{"reason":"x"}""") };
        retire.Headers.IfMatch.Add(new EntityTagHeaderValue(etag));
        await Json.ProblemAsync(await tech.SendAsync(retire), HttpStatusCode.Forbidden);
        await Json.ProblemAsync(await _factory.CreateClient().GetAsync(location), HttpStatusCode.Unauthorized);
    }

    [Fact]
    public async Task DuplicateIdentityIs409AndUnknownIdIs404()
    {
        var tech = await _factory.ClientAsync("technician");
        await CreateAsync(tech, Body("RB-01"));
        await Json.ProblemAsync(await tech.PostAsync(Path, Json.Body(Body("RB-01"))), HttpStatusCode.Conflict);
        await Json.ProblemAsync(await tech.GetAsync($"{Path}/999"), HttpStatusCode.NotFound);
    }

    public static TheoryData<string, string> BadBodies => new()
    {
        { Body().Replace("\"identity\": \"RB-01\",", "", StringComparison.Ordinal), "identity" },
        { Body(kind: "sundial"), "kind" },
        { Body().Replace("10000000", "-1", StringComparison.Ordinal), "nominalFrequencyHz" },
        { Body(u: -2e-12), "calibration.expandedUncertainty" },
        { Body().Replace("\"coverageFactor\": 2", "\"coverageFactor\": 0", StringComparison.Ordinal), "calibration.coverageFactor" },
        { Body(dueInDays: -90), "dueDate" },
        { Body().Replace("\"certificateNumber\": \"NMI-2026-0417\",", "", StringComparison.Ordinal), "calibration.certificateNumber" },
        { """{"identity":"x","kind":"rubidium","nominalFrequencyHz":1e7,"dueDate":"2030-01-01T00:00:00Z"}""", "calibration" },
    };

    [Theory]
    [MemberData(nameof(BadBodies))]
    public async Task BadInputIsAProblemNamingTheFieldAndStoresNothing(string body, string field)
    {
        var tech = await _factory.ClientAsync("technician");
        var problem = await Json.ProblemAsync(await tech.PostAsync(Path, Json.Body(body)), HttpStatusCode.BadRequest);
        Assert.Contains(field, Json.ErrorFields(problem));
        Assert.Empty((await Json.ReadAsync(await tech.GetAsync($"{Path}?includeRetired=true"), HttpStatusCode.OK))["items"]!.AsArray());
    }
}
