using System.Net;
using System.Text.Json.Nodes;

namespace CalBudget.Api.Tests;

public sealed class StabilityApiTests : IDisposable
{
    private const string Path = "/api/v1/stability";
    private readonly ServiceFactory _factory = new();

    public void Dispose() => _factory.Dispose();

    // NIST SP 1065 section 12 data (../shared/CHECKS.md), from the Core tests' reference file linked into this project.
    private static double[] Sp1065() => CalBudget.Core.Tests.Stability.ReferenceData.Sp1065Frequency();

    private static string Body(object values, string statistics = "[\"oadev\",\"mdev\"]", string factors = "[1,10,100]", string type = "\"frequency\"", string tau0 = "1.0") =>
        $$"""{"dataType":{{type}},"tau0":{{tau0}},"values":{{Json.Serialize(values)}},"statistics":{{statistics}},"averagingFactors":{{factors}}}""";

    [Fact]
    public async Task TheSp1065SuiteComesBackOverHttp()
    {
        var r = await Json.PostAsync(await _factory.ClientAsync("auditor"), Path, Body(Sp1065()), HttpStatusCode.OK);
        var oadev = r["results"]!["oadev"]!.AsArray();
        Assert.Equal(3, oadev.Count);
        // SP 1065 section 12: OADEV 9.159953e-02 at tau 10, MDEV 2.170921e-02 at tau 100
        Assert.Equal(9.159953e-02, Json.Number(oadev[1]!["deviation"]), 1e-8);
        Assert.Equal(2.170921e-02, Json.Number(r["results"]!["mdev"]![2]!["deviation"]), 1e-8);
        Assert.Equal(10.0, Json.Number(oadev[1]!["tau"]));
        Assert.Equal(1001 - 20, oadev[1]!["count"]!.GetValue<int>());
        var interval = oadev[1]!["interval"]!.AsArray();
        Assert.True(Json.Number(interval[0]) < 9.159953e-02 && 9.159953e-02 < Json.Number(interval[1]));
        Assert.True(Json.Number(oadev[1]!["degreesOfFreedom"]) > 1);
        var noise = r["noise"]!.AsArray();
        Assert.Equal(3, noise.Count);
        Assert.Equal(1.0, Json.Number(noise[0]!["tau"]));
        Assert.False(string.IsNullOrEmpty(noise[0]!["type"]!.GetValue<string>()));
    }

    [Fact]
    public async Task NullReadingsAreGapsThatLeaveTermsOut()
    {
        var values = Sp1065().Select((v, i) => i == 500 ? (double?)null : v).ToArray();
        var r = await Json.PostAsync(await _factory.ClientAsync("technician"), Path, Body(values, "[\"oadev\"]", "[1]"), HttpStatusCode.OK);
        // the gap is y[500]: the two OADEV terms at m = 1 that use it are left out
        Assert.Equal(1001 - 2 - 2, r["results"]!["oadev"]![0]!["count"]!.GetValue<int>());
    }

    [Fact]
    public async Task DefaultFactorsAreOctaves()
    {
        var r = await Json.PostAsync(await _factory.ClientAsync("technician"), Path,
            $$"""{"dataType":"frequency","tau0":0.5,"values":{{Json.Serialize(Sp1065())}},"statistics":["adev"]}""", HttpStatusCode.OK);
        var adev = r["results"]!["adev"]!.AsArray();
        Assert.Equal([1, 2, 4, 8, 16, 32, 64, 128, 256], adev.Select(p => p!["averagingFactor"]!.GetValue<int>()));
        Assert.Equal(128.0, Json.Number(adev[^1]!["tau"]));
    }

    public static TheoryData<string, int, string> BadRequests => new()
    {
        { """{"dataType":"frequency","tau0":1,"values":[],"statistics":["adev"]}""", 400, "values" },
        { """{"dataType":"frequency","tau0":1,"statistics":["adev"]}""", 400, "values" },
        { """{"dataType":"frequency","tau0":0,"values":[1,2,3],"statistics":["adev"]}""", 400, "tau0" },
        { """{"dataType":"frequency","tau0":-1,"values":[1,2,3],"statistics":["adev"]}""", 400, "tau0" },
        { """{"dataType":"frequency","values":[1,2,3],"statistics":["adev"]}""", 400, "tau0" },
        { """{"dataType":"frequency","tau0":1,"values":[1,2,3],"statistics":["allan"]}""", 400, "statistics[0]" },
        { """{"dataType":"frequency","tau0":1,"values":[1,2,3],"statistics":[]}""", 400, "statistics" },
        { """{"dataType":"velocity","tau0":1,"values":[1,2,3],"statistics":["adev"]}""", 400, "dataType" },
        { """{"tau0":1,"values":[1,2,3],"statistics":["adev"]}""", 400, "dataType" },
        { """{"dataType":"frequency","tau0":1,"values":[1,2,3],"statistics":["adev"],"averagingFactors":[0]}""", 400, "averagingFactors[0]" },
        { """{"dataType":"frequency","tau0":1,"values":[1,2,3],"statistics":["adev"],"averagingFactors":[1.5]}""", 400, "averagingFactors[0]" },
        { """{"dataType":"frequency","tau0":1,"values":[1,"x",3],"statistics":["adev"]}""", 400, "values[1]" },
        { """{"dataType":"frequency","tau0":1,"values":[1,null,3,4,5,6],"statistics":["totdev"]}""", 422, "statistics" },
        { """{"dataType":"frequency","tau0":1,"values":[1,2.,3],"statistics":["adev"]}""", 400, "values[1]" },
        { """{"dataType":"frequency","tau0":1,"values":[1,NaN,3],"statistics":["adev"]}""", 400, "values[1]" },
        { """{"dataType":"frequency","tau0":1,"values":[1,+2,3],"statistics":["adev"]}""", 400, "values[1]" },
        { """{"dataType":"frequency","tau0":1,"values":[1,[2],3],"statistics":["adev"]}""", 400, "values[1]" },
        { """{"dataType":"frequency","tau0":1,"values":[1,2,3],"values":[4,5,6],"statistics":["adev"],"colour":1}""", 400, "colour" },
        { """{"dataType":"frequency","tau0":1,"values":[1,2,3,"statistics":["adev"]}""", 400, "values[3]" },
        { """{"dataType":"frequency","tau0":1,"values":[1],"statistics":["adev"]}""", 422, "values" },
    };

    [Theory]
    [MemberData(nameof(BadRequests))]
    public async Task BadRequestsAreProblemsNamingTheField(string body, int status, string field)
    {
        var client = await _factory.ClientAsync("integration");
        var problem = await Json.ProblemAsync(await client.PostAsync(Path, Json.Body(body)), (HttpStatusCode)status);
        Assert.Contains(field, Json.ErrorFields(problem));
    }

    [Fact]
    public async Task TheFastReadingOfALargeBodyAnswersAsTheSerializerDoes()
    {
        // the same readings, once where the scanner reads them (on both cores: over 65,536 of them) and once, spelt
        // "Values", where the serializer does; the answers must be identical
        var random = new Random(3);
        var text = new System.Text.StringBuilder();
        for (int i = 0; i < 70_000; i++)
        {
            text.Append(i == 0 ? "" : i % 3 == 0 ? " ,\n " : ",")
                .Append(i % 1000 == 7 ? "null" : (random.NextDouble() * 2e-11 - 1e-11).ToString(i % 2 == 0 ? "R" : "E12", System.Globalization.CultureInfo.InvariantCulture));
        }

        string body = "{\"dataType\":\"frequency\",\"tau0\":1,\"statistics\":[\"oadev\",\"mdev\",\"hdev\"], \"values\": [ " + text + " ] }";
        var client = await _factory.ClientAsync("auditor");
        var fast = await Json.ReadAsync(await client.PostAsync(Path, Json.Body(body)), HttpStatusCode.OK);
        var slow = await Json.ReadAsync(await client.PostAsync(Path, Json.Body(body.Replace("\"values\"", "\"Values\"", StringComparison.Ordinal))), HttpStatusCode.OK);
        Assert.Equal(slow.ToJsonString(), fast.ToJsonString());
        Assert.True(fast["results"]!["oadev"]!.AsArray().Count > 5);
    }
}
