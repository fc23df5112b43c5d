using System.Net;
using System.Net.Http.Headers;
using System.Text.Json.Nodes;

namespace CalBudget.Api.Tests;

public sealed class InstrumentsApiTests : IDisposable
{
    private const string Path = "/api/v1/instruments";
    private readonly ServiceFactory _factory = new();

    public void Dispose() => _factory.Dispose();

    // An invented bench counter of an invented customer (demo-style data, not a check value).
    private static string Body(string asset = "CB-0042", string customer = "Northfield Avionics", string kind = "OCXO",
        string postures = """[{"name":"standing on its feet","up":"+z"},{"name":"stand extended","up":[0,-0.2588,0.9659]},{"name":"on its left side","up":"-x"}]""",
        string tolerance = """{"lower":-5e-9,"upper":5e-9,"conditions":"one year after calibration, 23 +/- 5 degC"}""") => $$"""
    { "assetNumber": "{{asset}}", "customer": "{{customer}}", "manufacturer": "Quillon Instruments", "model": "FC-900", "serialNumber": "Q9-11873",
      "description": "universal counter, rear 10 MHz output",
      "timebase": { "oscillatorKind": "{{kind}}", "nominalFrequencyHz": 10000000,
        "specification": { "tolerance": {{tolerance}}, "agingPerDay": 5e-10, "agingPerYear": 5e-8,
          "temperatureCoefficientPerKelvin": 1e-10, "temperatureRangeCelsius": { "min": 0, "max": 50 },
          "accelerationSensitivityPerG": 1e-9, "warmUpMinutes": 30, "retrace": 5e-9 } },
      "postures": {{postures}} }
    """;

    private static async Task<(JsonNode Node, string ETag, Uri Location)> CreateAsync(HttpClient client, string body)
    {
        using var response = await client.PostAsync(Path, Json.Body(body));
        var node = await Json.ReadAsync(response, HttpStatusCode.Created);
        return (node, response.Headers.ETag!.Tag, response.Headers.Location!);
    }

    [Fact]
    public async Task AnInstrumentIsStoredWithItsTimebaseAndPostures()
    {
        var tech = await _factory.ClientAsync("technician");
        var (created, etag, location) = await CreateAsync(tech, Body());
        Assert.Equal("\"1\"", etag);
        var read = (JsonObject)await Json.ReadAsync(await tech.GetAsync(location), HttpStatusCode.OK);
        // reading one instrument adds its newest runs (none yet) to what the creation answered
        Assert.Empty(read["recentCalibrations"]!.AsArray());
        Assert.Null(created["recentCalibrations"]);
        read.Remove("recentCalibrations");
        ((JsonObject)created).Remove("recentCalibrations");
        Assert.Equal(created.ToJsonString(), read.ToJsonString());
        Assert.Equal("OCXO", read["timebase"]!["oscillatorKind"]!.GetValue<string>());
        Assert.Equal(-5e-9, Json.Number(read["timebase"]!["specification"]!["tolerance"]!["lower"]));
        Assert.Equal(1e-9, Json.Number(read["timebase"]!["specification"]!["accelerationSensitivityPerG"]));
        var postures = read["postures"]!.AsArray();
        Assert.Equal(["standing on its feet", "stand extended", "on its left side"], postures.Select(p => p!["name"]!.GetValue<string>()));
        // the tilted posture is normalised: |up| = 1
        var up = postures[1]!["up"]!.AsArray().Select(Json.Number).ToArray();
        Assert.Equal(1.0, Math.Sqrt(up.Sum(v => v * v)), 1e-12);
        Assert.Contains("+z up through the top cover", read["bodyFrame"]!.GetValue<string>(), StringComparison.Ordinal);
        Assert.Equal("active", read["status"]!.GetValue<string>());
    }

    [Fact]
    public async Task UpdatesNeedTheCurrentETagAndReplacePostures()
    {
        var tech = await _factory.ClientAsync("integration");
        var (_, etag, location) = await CreateAsync(tech, Body());
        var put = new HttpRequestMessage(HttpMethod.Put, location) { Content = Json.Body(Body(postures: """[{"name":"upside down","up":"-z"}]""")) };
        put.Headers.IfMatch.Add(new EntityTagHeaderValue(etag));
        var updated = await Json.ReadAsync(await tech.SendAsync(put), HttpStatusCode.OK);
        Assert.Single(updated["postures"]!.AsArray());
        Assert.Equal(-1.0, Json.Number(updated["postures"]![0]!["up"]![2]));

        var stale = new HttpRequestMessage(HttpMethod.Put, location) { Content = Json.Body(Body()) };
        stale.Headers.IfMatch.Add(new EntityTagHeaderValue(etag));
        await Json.ProblemAsync(await tech.SendAsync(stale), HttpStatusCode.PreconditionFailed);
        await Json.ProblemAsync(await tech.PutAsync(location, Json.Body(Body())), (HttpStatusCode)428);
    }

    [Fact]
    public async Task ListsFilterByCustomerKindAndTextAndPage()
    {
        var tech = await _factory.ClientAsync("technician");
        await CreateAsync(tech, Body("A-1", "Northfield Avionics", "OCXO"));
        await CreateAsync(tech, Body("A-2", "Northfield Avionics", "TCXO"));
        await CreateAsync(tech, Body("B-1", "Harbour Test House", "rubidium"));
        var northfield = await Json.ReadAsync(await tech.GetAsync($"{Path}?customer=Northfield%20Avionics"), HttpStatusCode.OK);
        Assert.Equal(2, northfield["items"]!.AsArray().Count);
        var tcxo = await Json.ReadAsync(await tech.GetAsync($"{Path}?kind=TCXO"), HttpStatusCode.OK);
        Assert.Equal("A-2", tcxo["items"]![0]!["assetNumber"]!.GetValue<string>());
        var text = await Json.ReadAsync(await tech.GetAsync($"{Path}?text=B-1"), HttpStatusCode.OK);
        Assert.Single(text["items"]!.AsArray());
        var first = await Json.ReadAsync(await tech.GetAsync($"{Path}?limit=2"), HttpStatusCode.OK);
        var second = await Json.ReadAsync(await tech.GetAsync($"{Path}?limit=2&cursor={first["nextCursor"]}"), HttpStatusCode.OK);
        Assert.Equal("B-1", second["items"]![0]!["assetNumber"]!.GetValue<string>());
        Assert.Null(second["nextCursor"]);
        Assert.Contains("kind", Json.ErrorFields(await Json.ProblemAsync(await tech.GetAsync($"{Path}?kind=sundial"), HttpStatusCode.BadRequest)));
    }

    [Fact]
    public async Task CreationIsIdempotentPerKey()
    {
        var lims = await _factory.ClientAsync("integration");
        async Task<HttpResponseMessage> Post(string body)
        {
            var request = new HttpRequestMessage(HttpMethod.Post, Path) { Content = Json.Body(body) };
            request.Headers.Add("Idempotency-Key", "intake-5521");
            return await lims.SendAsync(request);
        }

        var a = await Json.ReadAsync(await Post(Body()), HttpStatusCode.Created);
        var b = await Json.ReadAsync(await Post(Body()), HttpStatusCode.Created);
        Assert.Equal(a["id"]!.GetValue<long>(), b["id"]!.GetValue<long>());
        await Json.ProblemAsync(await Post(Body("CB-0043")), HttpStatusCode.UnprocessableEntity);
    }

    [Fact]
    public async Task RolesAndRetirement()
    {
        var tech = await _factory.ClientAsync("technician");
        var (_, etag, location) = await CreateAsync(tech, Body());
        await Json.ProblemAsync(await (await _factory.ClientAsync("auditor")).PostAsync(Path, Json.Body(Body("X-1"))), HttpStatusCode.Forbidden);
        await Json.ProblemAsync(await (await _factory.ClientAsync("approver")).PostAsync(Path, Json.Body(Body("X-2"))), HttpStatusCode.Forbidden);
        await Json.ReadAsync(await (await _factory.ClientAsync("auditor")).GetAsync(location), HttpStatusCode.OK);

        var retire = new HttpRequestMessage(HttpMethod.Post, $"{location}/retire") { Content = Json.Body("""{"reason":"returned to customer, not to be recalled"}""") };
        retire.Headers.IfMatch.Add(new EntityTagHeaderValue(etag));
        var techRetire = new HttpRequestMessage(HttpMethod.Post, $"{location}/retire") { Content = Json.Body("""{"reason":"x"}""") };
        techRetire.Headers.IfMatch.Add(new EntityTagHeaderValue(etag));
        await Json.ProblemAsync(await tech.SendAsync(techRetire), HttpStatusCode.Forbidden);
        var retired = await Json.ReadAsync(await (await _factory.ClientAsync("admin")).SendAsync(retire), HttpStatusCode.OK);
        Assert.Equal("retired", retired["status"]!.GetValue<string>());
        // still on record, and no longer in the default list
        await Json.ReadAsync(await tech.GetAsync(location), HttpStatusCode.OK);
        Assert.Empty((await Json.ReadAsync(await tech.GetAsync(Path), HttpStatusCode.OK))["items"]!.AsArray());
    }

    public static TheoryData<string, int, string> BadBodies => new()
    {
        { Body(postures: """[{"name":"a","up":"+z"},{"name":"b","up":[0,0,0]}]"""), 400, "postures[1].up" },
        { Body(postures: """[{"name":"a","up":"upwards"}]"""), 400, "postures[0].up" },
        { Body(postures: """[{"name":"a","up":"+z"},{"name":"a","up":"-z"}]"""), 400, "postures[1].name" },
        { Body(kind: "quartz"), 400, "timebase.oscillatorKind" },
        { Body(tolerance: """{"lower":5e-9,"upper":-5e-9}"""), 400, "timebase.specification.tolerance" },
        { Body(tolerance: """{"conditions":"none"}"""), 400, "timebase.specification.tolerance" },
        { Body().Replace("\"min\": 0, \"max\": 50", "\"min\": 50, \"max\": 0", StringComparison.Ordinal), 400, "timebase.specification.temperatureRangeCelsius" },
        { Body().Replace("\"accelerationSensitivityPerG\": 1e-9", "\"accelerationSensitivityPerG\": -1e-9", StringComparison.Ordinal), 400, "timebase.specification.accelerationSensitivityPerG" },
        { Body().Replace("\"assetNumber\": \"CB-0042\",", "", StringComparison.Ordinal), 400, "assetNumber" },
        { """{"assetNumber":"x","customer":"y"}""", 400, "timebase" },
        { Body().Replace("10000000", "0", StringComparison.Ordinal), 400, "timebase.nominalFrequencyHz" },
    };

    [Theory]
    [MemberData(nameof(BadBodies))]
    public async Task BadInputIsAProblemNamingTheFieldAndStoresNothing(string body, int status, string field)
    {
        var tech = await _factory.ClientAsync("technician");
        var problem = await Json.ProblemAsync(await tech.PostAsync(Path, Json.Body(body)), (HttpStatusCode)status);
        Assert.Contains(field, Json.ErrorFields(problem));
        Assert.Empty((await Json.ReadAsync(await tech.GetAsync($"{Path}?includeRetired=true"), HttpStatusCode.OK))["items"]!.AsArray());
    }

    [Fact]
    public async Task ADuplicateAssetNumberIs409()
    {
        var tech = await _factory.ClientAsync("technician");
        await CreateAsync(tech, Body());
        await Json.ProblemAsync(await tech.PostAsync(Path, Json.Body(Body())), HttpStatusCode.Conflict);
    }
}
