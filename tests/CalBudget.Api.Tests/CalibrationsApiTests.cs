using System.Net;
using System.Net.Http.Headers;

namespace CalBudget.Api.Tests;

public sealed class CalibrationsApiTests : IDisposable
{
    private const string Path = "/api/v1/calibrations";
    private readonly ServiceFactory _factory = new();

    public void Dispose() => _factory.Dispose();

    [Fact]
    public async Task ARunIsRecordedWithItsConditionsAndTheCallerAsOperator()
    {
        var tech = await _factory.ClientAsync("technician");
        long instrument = await LabRecords.InstrumentAsync(tech);
        long reference = await LabRecords.ReferenceAsync(tech);
        using var response = await tech.PostAsync(Path, Json.Body(LabRecords.RunBody(instrument, reference)));
        var run = await Json.ReadAsync(response, HttpStatusCode.Created);
        Assert.Equal($"{Path}/{run["id"]}", response.Headers.Location!.OriginalString);
        Assert.Equal("\"1\"", response.Headers.ETag!.Tag);
        Assert.StartsWith("technician-", run["operator"]!.GetValue<string>(), StringComparison.Ordinal);
        Assert.Equal("CB-0042", run["instrumentAssetNumber"]!.GetValue<string>());
        Assert.Equal("RB-01", run["referenceIdentity"]!.GetValue<string>());
        Assert.Equal("standing on its feet", run["posture"]!["name"]!.GetValue<string>());
        Assert.Equal([0.0, 0.0, 1.0], run["posture"]!["up"]!.AsArray().Select(Json.Number));
        Assert.Equal(1e-12, Json.Number(run["comparator"]!["resolution"]));
        Assert.Equal(0.4, Json.Number(run["environment"]!["temperatureVariationKelvin"]));
        Assert.Equal("as-found", run["condition"]!.GetValue<string>());
        Assert.Equal("bench 2\nwarm-up 30 min", run["notes"]!.GetValue<string>());
        Assert.Null(run["readings"]);

        var read = await Json.ReadAsync(await tech.GetAsync(response.Headers.Location), HttpStatusCode.OK);
        Assert.Equal(run.ToJsonString(), read.ToJsonString());
    }

    [Fact]
    public async Task AnExplicitUpVectorIsNormalisedAndHasNoPostureName()
    {
        var tech = await _factory.ClientAsync("integration");
        long instrument = await LabRecords.InstrumentAsync(tech);
        long reference = await LabRecords.ReferenceAsync(tech);
        var run = await Json.PostAsync(tech, Path, LabRecords.RunBody(instrument, reference, """{ "up": [0, -1, 1] }"""), HttpStatusCode.Created);
        Assert.Null(run["posture"]!["name"]);
        var up = run["posture"]!["up"]!.AsArray().Select(Json.Number).ToArray();
        Assert.Equal(0, up[0], 15);
        Assert.Equal(-Math.Sqrt(0.5), up[1], 15);
        Assert.Equal(Math.Sqrt(0.5), up[2], 15);
    }

    [Fact]
    public async Task AnOverdueReferenceCannotBeUsedForANewRun()
    {
        var tech = await _factory.ClientAsync("technician");
        long instrument = await LabRecords.InstrumentAsync(tech);
        long overdue = await LabRecords.ReferenceAsync(tech, "RB-OLD", dueInDays: -2);
        var problem = await Json.ProblemAsync(await tech.PostAsync(Path, Json.Body(LabRecords.RunBody(instrument, overdue))), HttpStatusCode.Conflict);
        Assert.Equal(["referenceId"], Json.ErrorFields(problem));
        Assert.Contains("out of calibration", problem["detail"]!.GetValue<string>(), StringComparison.Ordinal);
        var list = await Json.ReadAsync(await tech.GetAsync(Path), HttpStatusCode.OK);
        Assert.Empty(list["items"]!.AsArray());
    }

    [Fact]
    public async Task ARetiredReferenceCannotBeUsedForANewRun()
    {
        var tech = await _factory.ClientAsync("technician");
        var admin = await _factory.ClientAsync("admin");
        long instrument = await LabRecords.InstrumentAsync(tech);
        long reference = await LabRecords.ReferenceAsync(tech);
        var retire = new HttpRequestMessage(HttpMethod.Post, $"/api/v1/references/{reference}/retire") { Content = Json.Body("""{ "reason": "sent away for repair" }""") };
        retire.Headers.IfMatch.Add(new EntityTagHeaderValue("\"1\""));
        await Json.ReadAsync(await admin.SendAsync(retire), HttpStatusCode.OK);
        var problem = await Json.ProblemAsync(await tech.PostAsync(Path, Json.Body(LabRecords.RunBody(instrument, reference))), HttpStatusCode.Conflict);
        Assert.Contains("retired", problem["detail"]!.GetValue<string>(), StringComparison.Ordinal);
    }

    [Fact]
    public async Task UnknownInstrumentsReferencesAndPosturesAreNamed()
    {
        var tech = await _factory.ClientAsync("technician");
        long instrument = await LabRecords.InstrumentAsync(tech);
        long reference = await LabRecords.ReferenceAsync(tech);
        var both = await Json.ProblemAsync(await tech.PostAsync(Path, Json.Body(LabRecords.RunBody(9999, 8888))), HttpStatusCode.UnprocessableEntity);
        Assert.Equal(["instrumentId", "referenceId"], Json.ErrorFields(both).Order(StringComparer.Ordinal));
        var posture = await Json.ProblemAsync(await tech.PostAsync(Path, Json.Body(LabRecords.RunBody(instrument, reference, """{ "name": "upside down" }"""))),
            HttpStatusCode.UnprocessableEntity);
        Assert.Equal(["posture.name"], Json.ErrorFields(posture));
    }

    public static TheoryData<string, string> BadRuns => new()
    {
        { """{ "name": "standing on its feet", "up": "+z" }""", "posture" },
        { """{ }""", "posture" },
        { """{ "up": [0, 0, 0] }""", "posture.up" },
        { """{ "up": [1, 2] }""", "posture.up" },
        { """{ "up": "+w" }""", "posture.up" },
    };

    [Theory]
    [MemberData(nameof(BadRuns))]
    public async Task BadPosturesAreRefusedNamingTheField(string posture, string field)
    {
        var tech = await _factory.ClientAsync("technician");
        long instrument = await LabRecords.InstrumentAsync(tech);
        long reference = await LabRecords.ReferenceAsync(tech);
        var problem = await Json.ProblemAsync(await tech.PostAsync(Path, Json.Body(LabRecords.RunBody(instrument, reference, posture))), HttpStatusCode.BadRequest);
        Assert.Contains(field, Json.ErrorFields(problem));
    }

    [Theory]
    [InlineData("\"gateTimeSeconds\": 1,", "\"gateTimeSeconds\": 0,", "gateTimeSeconds")]
    [InlineData("\"resolution\": 1e-12", "\"resolution\": -1e-12", "comparator.resolution")]
    [InlineData("\"name\": \"lab counter C-3\", ", "", "comparator.name")]
    [InlineData("\"as-found\"", "\"as found\"", "condition")]
    [InlineData("\"relativeHumidityPercent\": 41", "\"relativeHumidityPercent\": 140", "environment.relativeHumidityPercent")]
    [InlineData("\"temperatureVariationKelvin\": 0.4", "\"temperatureVariationKelvin\": -0.4", "environment.temperatureVariationKelvin")]
    [InlineData("\"endedAt\": \"2026-11-30T09:10:00Z\"", "\"endedAt\": \"2026-11-30T08:10:00Z\"", "endedAt")]
    [InlineData("\"startedAt\": \"2026-11-30T09:00:00Z\",", "", "startedAt")]
    public async Task BadFieldsAreRefusedNamingTheField(string from, string to, string field)
    {
        var tech = await _factory.ClientAsync("technician");
        long instrument = await LabRecords.InstrumentAsync(tech);
        long reference = await LabRecords.ReferenceAsync(tech);
        string body = LabRecords.RunBody(instrument, reference);
        Assert.Contains(from, body, StringComparison.Ordinal);
        var problem = await Json.ProblemAsync(await tech.PostAsync(Path, Json.Body(body.Replace(from, to, StringComparison.Ordinal))), HttpStatusCode.BadRequest);
        Assert.Contains(field, Json.ErrorFields(problem));
    }

    [Fact]
    public async Task UpdatesNeedTheCurrentETagAndKeepTheOperator()
    {
        var tech = await _factory.ClientAsync("technician");
        var other = await _factory.ClientAsync("integration");
        long instrument = await LabRecords.InstrumentAsync(tech);
        long reference = await LabRecords.ReferenceAsync(tech);
        using var created = await tech.PostAsync(Path, Json.Body(LabRecords.RunBody(instrument, reference)));
        var run = await Json.ReadAsync(created, HttpStatusCode.Created);
        var location = created.Headers.Location!;
        await Json.ProblemAsync(await other.PutAsync(location, Json.Body(LabRecords.RunBody(instrument, reference, condition: "as-left"))), (HttpStatusCode)428);

        var put = new HttpRequestMessage(HttpMethod.Put, location) { Content = Json.Body(LabRecords.RunBody(instrument, reference, condition: "as-left")) };
        put.Headers.IfMatch.Add(created.Headers.ETag!);
        using var updated = await other.SendAsync(put);
        var after = await Json.ReadAsync(updated, HttpStatusCode.OK);
        Assert.Equal("as-left", after["condition"]!.GetValue<string>());
        Assert.Equal(run["operator"]!.GetValue<string>(), after["operator"]!.GetValue<string>());
        Assert.NotEqual(after["operator"]!.GetValue<string>(), after["updatedBy"]!.GetValue<string>());
        Assert.Equal("\"2\"", updated.Headers.ETag!.Tag);

        var stale = new HttpRequestMessage(HttpMethod.Put, location) { Content = Json.Body(LabRecords.RunBody(instrument, reference)) };
        stale.Headers.IfMatch.Add(created.Headers.ETag!);
        await Json.ProblemAsync(await other.SendAsync(stale), HttpStatusCode.PreconditionFailed);
    }

    [Fact]
    public async Task TheInstrumentCannotChangeOnceReadingsAreUploaded()
    {
        var tech = await _factory.ClientAsync("technician");
        long run = await LabRecords.RunAsync(tech);
        long second = await LabRecords.InstrumentAsync(tech, "CB-0099");
        var current = await Json.ReadAsync(await tech.GetAsync($"{Path}/{run}"), HttpStatusCode.OK);
        using var csv = new StringContent("timestamp,frequencyHz\n2026-11-30T09:00:01Z,10000000.00002\n", System.Text.Encoding.UTF8, "text/csv");
        await Json.ReadAsync(await tech.PostAsync($"{Path}/{run}/readings", csv), HttpStatusCode.Created);
        var put = new HttpRequestMessage(HttpMethod.Put, $"{Path}/{run}")
        {
            Content = Json.Body(LabRecords.RunBody(second, current["referenceId"]!.GetValue<long>())),
        };
        put.Headers.IfMatch.Add(new EntityTagHeaderValue("\"1\""));
        var problem = await Json.ProblemAsync(await tech.SendAsync(put), HttpStatusCode.Conflict);
        Assert.Equal(["instrumentId"], Json.ErrorFields(problem));
    }

    [Fact]
    public async Task AnIdempotencyKeyReplaysTheFirstAnswer()
    {
        var tech = await _factory.ClientAsync("technician");
        long instrument = await LabRecords.InstrumentAsync(tech);
        long reference = await LabRecords.ReferenceAsync(tech);
        async Task<HttpResponseMessage> Send(string body)
        {
            var post = new HttpRequestMessage(HttpMethod.Post, Path) { Content = Json.Body(body) };
            post.Headers.Add("Idempotency-Key", "run-2026-11-30-a");
            return await tech.SendAsync(post);
        }

        var first = await Json.ReadAsync(await Send(LabRecords.RunBody(instrument, reference)), HttpStatusCode.Created);
        using var again = await Send(LabRecords.RunBody(instrument, reference));
        Assert.Equal(first.ToJsonString(), (await Json.ReadAsync(again, HttpStatusCode.Created)).ToJsonString());
        Assert.Equal($"{Path}/{first["id"]}", again.Headers.Location!.OriginalString);
        await Json.ProblemAsync(await Send(LabRecords.RunBody(instrument, reference, condition: "as-left")), HttpStatusCode.UnprocessableEntity);
        var list = await Json.ReadAsync(await tech.GetAsync(Path), HttpStatusCode.OK);
        Assert.Single(list["items"]!.AsArray());
    }

    [Fact]
    public async Task ListsFilterAndPageAndTheInstrumentShowsItsNewestRuns()
    {
        var tech = await _factory.ClientAsync("technician");
        long a = await LabRecords.InstrumentAsync(tech, "A-1");
        long b = await LabRecords.InstrumentAsync(tech, "B-1");
        long reference = await LabRecords.ReferenceAsync(tech);
        for (int i = 0; i < 12; i++)
        {
            await Json.PostAsync(tech, Path, LabRecords.RunBody(i % 3 == 0 ? b : a, reference, condition: i % 2 == 0 ? "as-found" : "as-left"), HttpStatusCode.Created);
        }

        var ofA = await Json.ReadAsync(await tech.GetAsync($"{Path}?instrumentId={a}&limit=5"), HttpStatusCode.OK);
        Assert.Equal(5, ofA["items"]!.AsArray().Count);
        var rest = await Json.ReadAsync(await tech.GetAsync($"{Path}?instrumentId={a}&limit=5&cursor={ofA["nextCursor"]}"), HttpStatusCode.OK);
        Assert.Equal(3, rest["items"]!.AsArray().Count);
        Assert.Null(rest["nextCursor"]);
        var ids = ofA["items"]!.AsArray().Concat(rest["items"]!.AsArray()).Select(r => r!["id"]!.GetValue<long>()).ToArray();
        Assert.Equal(ids.Order(), ids);
        var asLeft = await Json.ReadAsync(await tech.GetAsync($"{Path}?condition=as-left"), HttpStatusCode.OK);
        Assert.Equal(6, asLeft["items"]!.AsArray().Count);
        await Json.ProblemAsync(await tech.GetAsync($"{Path}?condition=adjusted"), HttpStatusCode.BadRequest);

        var instrument = await Json.ReadAsync(await tech.GetAsync($"/api/v1/instruments/{a}"), HttpStatusCode.OK);
        var recent = instrument["recentCalibrations"]!.AsArray().Select(r => r!["id"]!.GetValue<long>()).ToArray();
        Assert.Equal(8, recent.Length);
        Assert.Equal(recent.OrderDescending(), recent);
        Assert.Equal(ids.OrderDescending(), recent);
    }

    [Fact]
    public async Task OnlyAdminsRetireARunAndARetiredRunTakesNoReadings()
    {
        var tech = await _factory.ClientAsync("technician");
        var admin = await _factory.ClientAsync("admin");
        long run = await LabRecords.RunAsync(tech);
        HttpRequestMessage Retire()
        {
            var r = new HttpRequestMessage(HttpMethod.Post, $"{Path}/{run}/retire") { Content = Json.Body("""{ "reason": "wrong counter recorded" }""") };
            r.Headers.IfMatch.Add(new EntityTagHeaderValue("\"1\""));
            return r;
        }

        Assert.Equal(HttpStatusCode.Forbidden, (await tech.SendAsync(Retire())).StatusCode);
        var retired = await Json.ReadAsync(await admin.SendAsync(Retire()), HttpStatusCode.OK);
        Assert.Equal("retired", retired["status"]!.GetValue<string>());
        using var csv = new StringContent("timestamp,frequencyHz\n2026-11-30T09:00:01Z,10000000.00002\n", System.Text.Encoding.UTF8, "text/csv");
        await Json.ProblemAsync(await tech.PostAsync($"{Path}/{run}/readings", csv), HttpStatusCode.Conflict);
        var list = await Json.ReadAsync(await tech.GetAsync(Path), HttpStatusCode.OK);
        Assert.Empty(list["items"]!.AsArray());
        var all = await Json.ReadAsync(await tech.GetAsync($"{Path}?includeRetired=true"), HttpStatusCode.OK);
        Assert.Single(all["items"]!.AsArray());
    }
}
