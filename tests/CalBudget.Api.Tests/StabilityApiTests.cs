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
        { """{"dataType":"frequency","tau0":1,"values":[ , 1, 2, 3],"statistics":["adev"]}""", 400, "values[0]" },
        { """{"dataType":"frequency","tau0":1,"values":[1, 2, 3,],"statistics":["adev"]}""", 400, "values[3]" },
        { """{"dataType":"frequency","tau0":1,"values":[1,,2,3],"statistics":["adev"]}""", 400, "values[1]" },
        { """{"dataType":"frequency","tau0":1,"values":[1,2,3]""", 400, "body" },
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

    [Fact]
    public async Task ABodyThatTricklesInIsReadAsTheSameBodyAtOnce()
    {
        // The scanner reads the readings while the body is still arriving; here it arrives in pieces of 1 to 3,000 bytes,
        // split anywhere (inside numbers, nulls and the brackets), with the readings first and more properties after them.
        // The answer must be the one for the whole body at once, and the one the serializer gives (spelt "Values").
        var random = new Random(11);
        var text = new System.Text.StringBuilder();
        for (int i = 0; i < 20_000; i++)
        {
            text.Append(i == 0 ? "" : i % 5 == 0 ? " , " : ",")
                .Append(i % 700 == 3 ? "null" : (3e-9 + random.NextDouble() * 2e-11).ToString("R", System.Globalization.CultureInfo.InvariantCulture));
        }

        string body = "{\"values\": [" + text + "] , \"dataType\":\"frequency\",\"tau0\":1,\"statistics\":[\"oadev\",\"mdev\"]}";
        var client = await _factory.ClientAsync("auditor");
        var trickled = await Json.ReadAsync(await client.PostAsync(Path, new TricklingContent(body, seed: 5)), HttpStatusCode.OK);
        var whole = await Json.ReadAsync(await client.PostAsync(Path, Json.Body(body)), HttpStatusCode.OK);
        var serializer = await Json.ReadAsync(await client.PostAsync(Path, Json.Body(body.Replace("\"values\"", "\"Values\"", StringComparison.Ordinal))), HttpStatusCode.OK);
        Assert.Equal(whole.ToJsonString(), trickled.ToJsonString());
        Assert.Equal(serializer.ToJsonString(), trickled.ToJsonString());
        Assert.True(trickled["results"]!["mdev"]!.AsArray().Count > 5);
    }

    [Theory]
    [InlineData("1,2,x,4", "values[2]")]
    [InlineData("1,2,,4", "values[2]")]
    [InlineData("1,2,3,", "values[3]")]
    [InlineData("1,2,3", "values")]
    public async Task ABadReadingInATricklingBodyIsAProblemNamingIt(string tail, string field)
    {
        // a long valid start, so that the scanner has taken most of the readings before it meets the fault
        string start = string.Join(",", Enumerable.Range(0, 5_000).Select(i => (1e-11 * (i % 13)).ToString("R", System.Globalization.CultureInfo.InvariantCulture)));
        string body = "{\"dataType\":\"frequency\",\"tau0\":1,\"statistics\":[\"oadev\"],\"values\":[" + start + "," + tail
            + (tail == "1,2,3" ? "" : "]}");
        var client = await _factory.ClientAsync("auditor");
        var problem = await Json.ProblemAsync(await client.PostAsync(Path, new TricklingContent(body, seed: 9)), HttpStatusCode.BadRequest);
        string expected = field == "values" ? "values" : $"values[{5_000 + int.Parse(field[7..^1], System.Globalization.CultureInfo.InvariantCulture)}]";
        Assert.Contains(Json.ErrorFields(problem), f => f.StartsWith(expected, StringComparison.Ordinal));
    }

    // A JSON body with its Content-Length, written in pieces of random size with a flush after each.
    private sealed class TricklingContent : HttpContent
    {
        private readonly byte[] _bytes;
        private readonly int _seed;

        public TricklingContent(string json, int seed)
        {
            _bytes = System.Text.Encoding.UTF8.GetBytes(json);
            _seed = seed;
            Headers.ContentType = Json.JsonType;
            Headers.ContentLength = _bytes.Length;
        }

        protected override async Task SerializeToStreamAsync(Stream stream, TransportContext? context)
        {
            var random = new Random(_seed);
            for (int at = 0; at < _bytes.Length;)
            {
                int n = Math.Min(random.Next(1, 3_000), _bytes.Length - at);
                await stream.WriteAsync(_bytes.AsMemory(at, n));
                await stream.FlushAsync();
                at += n;
            }
        }

        protected override bool TryComputeLength(out long length)
        {
            length = _bytes.Length;
            return true;
        }
    }
}
