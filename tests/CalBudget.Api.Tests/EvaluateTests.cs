using System.Net;
using System.Text.Json.Nodes;

namespace CalBudget.Api.Tests;

public sealed class EvaluateTests : IDisposable
{
    private const string Path = "/api/v1/budgets/evaluate";
    private readonly ServiceFactory _factory = new(settings: new() { ["CalBudget:MonteCarloMaxTrials"] = "2000000" });

    public void Dispose() => _factory.Dispose();

    private async Task<HttpClient> Client() => await _factory.ClientAsync("integration");

    // The request of API.md, checked by hand from JCGM 100 eq. (13), (G.2b) and 4.3.
    [Fact]
    public async Task TheContractExampleGivesTheHandComputedBudget()
    {
        const string body = """
        {
          "measurand": "fractional frequency offset",
          "coverageProbability": 0.9545,
          "contributions": [
            { "name": "reference", "estimate": 0, "sensitivity": 1, "distribution": "normal", "expandedUncertainty": 2e-12, "coverageFactor": 2 },
            { "name": "resolution", "distribution": "rectangular", "halfWidth": 5e-12 },
            { "name": "repeatability", "distribution": "normal", "standardUncertainty": 3e-12, "degreesOfFreedom": 9, "type": "A" },
            { "name": "orientation", "distribution": "u-shaped", "halfWidth": 4e-10 },
            { "name": "temperature", "distribution": "triangular", "halfWidth": 1e-10 }
          ],
          "correlations": [ { "between": ["reference", "temperature"], "coefficient": 0.2 } ]
        }
        """;
        var r = await Json.PostAsync(await Client(), Path, body, HttpStatusCode.OK);
        double uRef = 2e-12 / 2, uRes = 5e-12 / Math.Sqrt(3), uRep = 3e-12, uOri = 4e-10 / Math.Sqrt(2), uTem = 1e-10 / Math.Sqrt(6);
        double uc2 = uRef * uRef + uRes * uRes + uRep * uRep + uOri * uOri + uTem * uTem + 2 * 0.2 * uRef * uTem;
        double uc = Math.Sqrt(uc2); // = 2.8583e-10
        AssertRelative(uc, Json.Number(r["combinedStandardUncertainty"]), 1e-12);
        // nu_eff = u_c^4 / (u_rep^4 / 9): only the Type A term has finite degrees of freedom.
        AssertRelative(uc2 * uc2 / (Math.Pow(uRep, 4) / 9), Json.Number(r["effectiveDegreesOfFreedom"]), 1e-9);
        // k: Student's t for 0.9545 at about 7.4e8 degrees of freedom, i.e. the normal 2.000 to five digits
        AssertRelative(2.0, Json.Number(r["coverageFactor"]), 1e-5);
        AssertRelative(Json.Number(r["coverageFactor"]) * uc, Json.Number(r["expandedUncertainty"]), 1e-12);
        var rows = r["contributions"]!.AsArray();
        Assert.Equal(5, rows.Count);
        AssertRelative(uRef, Json.Number(rows[0]!["contribution"]), 1e-12);
        AssertRelative(uOri * uOri / uc2, Json.Number(rows[3]!["varianceShare"]), 1e-12);
        Assert.Equal("A", rows[2]!["type"]!.GetValue<string>());
        Assert.Null(r["monteCarlo"]);
    }

    [Fact]
    public async Task InfiniteDegreesOfFreedomAreNullAndKIsNormal()
    {
        var r = await Json.PostAsync(await Client(), Path, """{"contributions":[{"name":"a","distribution":"rectangular","halfWidth":3}]}""", HttpStatusCode.OK);
        Assert.Null(r["effectiveDegreesOfFreedom"]);
        Assert.Equal(0.9545, Json.Number(r["coverageProbability"]));
        AssertRelative(2.0, Json.Number(r["coverageFactor"]), 1e-5);
        AssertRelative(Math.Sqrt(3), Json.Number(r["combinedStandardUncertainty"]), 1e-14);
    }

    // JCGM 101:2008 9.2.4 over HTTP: the GUM interval +/-19.9 fails validation against Monte Carlo +/-17.0.
    [Fact]
    public async Task MonteCarloRunsAndValidatesOverHttp()
    {
        const string body = """
        { "coverageProbability": 0.95,
          "contributions": [
            { "name": "x1", "distribution": "normal", "standardUncertainty": 1 },
            { "name": "x2", "distribution": "normal", "standardUncertainty": 1 },
            { "name": "x3", "distribution": "normal", "standardUncertainty": 1 },
            { "name": "x4", "distribution": "rectangular", "standardUncertainty": 10 } ],
          "monteCarlo": { "trials": 1000000, "seed": 7 } }
        """;
        var client = await Client();
        var r = await Json.PostAsync(client, Path, body, HttpStatusCode.OK);
        var mc = r["monteCarlo"]!;
        Assert.Equal(1_000_000, mc["trials"]!.GetValue<long>());
        Assert.InRange(Json.Number(mc["coverageInterval"]![1]), 16.995 - 0.06, 16.995 + 0.06);
        Assert.InRange(Json.Number(mc["shortestCoverageInterval"]![1]) - Json.Number(mc["shortestCoverageInterval"]![0]), 33.99 - 0.12, 33.99 + 0.12);
        Assert.False(mc["gumValidated"]!.GetValue<bool>());
        Assert.Equal(7UL, mc["seed"]!.GetValue<ulong>());
        // the same seed reproduces the run to the last digit
        var again = await Json.PostAsync(client, Path, body, HttpStatusCode.OK);
        Assert.Equal(mc.ToJsonString(), again["monteCarlo"]!.ToJsonString());
    }

    [Fact]
    public async Task MonteCarloWithoutTrialsIsAdaptiveAndReportsItsSeed()
    {
        var r = await Json.PostAsync(await Client(), Path,
            """{"coverageProbability":0.95,"contributions":[{"name":"a","distribution":"normal","standardUncertainty":1},{"name":"b","distribution":"triangular","halfWidth":1}],"monteCarlo":{}}""",
            HttpStatusCode.OK);
        var mc = r["monteCarlo"]!;
        Assert.True(mc["adaptive"]!.GetValue<bool>());
        Assert.True(mc["stabilized"]!.GetValue<bool>());
        Assert.True(mc["trials"]!.GetValue<long>() % 10_000 == 0);
        Assert.NotNull(mc["seed"]);
    }

    public static TheoryData<string, int, string> BadBudgets => new()
    {
        { """{}""", 400, "contributions" },
        { """{"contributions":[]}""", 400, "contributions" },
        { """{"contributions":[{"name":"a","distribution":"normal","standardUncertainty":-1}]}""", 400, "contributions[0].standardUncertainty" },
        { """{"contributions":[{"name":"a","distribution":"normal","standardUncertainty":"abc"}]}""", 400, "contributions[0].standardUncertainty" },
        { """{"contributions":[{"name":"a","distribution":"normal","standardUncertainty":NaN}]}""", 400, "contributions[0].standardUncertainty" },
        { """{"contributions":[{"name":"a","distribution":"normal","standardUncertainty":"Infinity"}]}""", 400, "contributions[0].standardUncertainty" },
        { """{"contributions":[{"name":"a","distribution":"normal","standardUncertainty":1e400}]}""", 400, "contributions[0].standardUncertainty" },
        { """{"contributions":[{"name":"a","distribution":"rectangular","halfWidth":-2}]}""", 400, "contributions[0].halfWidth" },
        { """{"contributions":[{"name":"a","distribution":"gaussian","standardUncertainty":1}]}""", 400, "contributions[0].distribution" },
        { """{"contributions":[{"name":"a","standardUncertainty":1}]}""", 400, "contributions[0].distribution" },
        { """{"contributions":[{"name":"a","distribution":"normal"}]}""", 400, "contributions[0].standardUncertainty" },
        { """{"contributions":[{"name":"a","distribution":"normal","expandedUncertainty":2}]}""", 400, "contributions[0].coverageFactor" },
        { """{"contributions":[{"name":"a","distribution":"rectangular"}]}""", 400, "contributions[0].halfWidth" },
        { """{"contributions":[{"name":"a","distribution":"student-t","standardUncertainty":1}]}""", 400, "contributions[0].degreesOfFreedom" },
        { """{"contributions":[{"name":"a","distribution":"normal","expandedUncertainty":2,"coverageFactor":0}]}""", 400, "contributions[0].coverageFactor" },
        { """{"contributions":[{"name":"a","distribution":"normal","expandedUncertainty":2,"coverageFactor":-2}]}""", 400, "contributions[0].coverageFactor" },
        { """{"contributions":[{"name":"a","distribution":"normal","standardUncertainty":1,"degreesOfFreedom":0}]}""", 400, "contributions[0].degreesOfFreedom" },
        { """{"contributions":[{"name":"a","distribution":"student-t","standardUncertainty":1,"degreesOfFreedom":-3}]}""", 400, "contributions[0].degreesOfFreedom" },
        { """{"contributions":[{"name":"a","distribution":"normal","standardUncertainty":1,"halfWidth":1}]}""", 400, "contributions[0].halfWidth" },
        { """{"contributions":[{"name":"a","distribution":"normal","standardUncertainty":1,"type":"C"}]}""", 400, "contributions[0].type" },
        { """{"contributions":[{"distribution":"normal","standardUncertainty":1}]}""", 400, "contributions[0].name" },
        { """{"contributions":[{"name":"a","distribution":"normal","standardUncertainty":1},{"name":"a","distribution":"normal","standardUncertainty":2}]}""", 400, "contributions[1].name" },
        { """{"contributions":[{"name":"a","distribution":"normal","standardUncertainty":1},{"name":"b","distribution":"normal","standardUncertainty":1}],"correlations":[{"between":["a","b"],"coefficient":1.5}]}""", 400, "correlations[0].coefficient" },
        { """{"contributions":[{"name":"a","distribution":"normal","standardUncertainty":1}],"correlations":[{"between":["a","zz"],"coefficient":0.5}]}""", 400, "correlations[0].between" },
        { """{"contributions":[{"name":"a","distribution":"normal","standardUncertainty":1}],"correlations":[{"between":["a","a"],"coefficient":0.5}]}""", 400, "correlations[0].between" },
        { """{"contributions":[{"name":"a","distribution":"normal","standardUncertainty":1}],"correlations":[{"between":["a"],"coefficient":0.5}]}""", 400, "correlations[0].between" },
        { """{"contributions":[{"name":"a","distribution":"normal","standardUncertainty":1},{"name":"b","distribution":"normal","standardUncertainty":1}],"correlations":[{"between":["a","b"]}]}""", 400, "correlations[0].coefficient" },
        { """{"contributions":[{"name":"a","distribution":"normal","standardUncertainty":1},{"name":"b","distribution":"normal","standardUncertainty":1},{"name":"c","distribution":"normal","standardUncertainty":1}],"correlations":[{"between":["a","b"],"coefficient":0.9},{"between":["a","c"],"coefficient":0.9},{"between":["b","c"],"coefficient":-0.9}]}""", 422, "correlations" },
        { """{"contributions":[{"name":"a","distribution":"normal","standardUncertainty":0}]}""", 422, "contributions" },
        { """{"coverageProbability":0,"contributions":[{"name":"a","distribution":"normal","standardUncertainty":1}]}""", 400, "coverageProbability" },
        { """{"coverageProbability":1,"contributions":[{"name":"a","distribution":"normal","standardUncertainty":1}]}""", 400, "coverageProbability" },
        { """{"coverageProbability":1.5,"contributions":[{"name":"a","distribution":"normal","standardUncertainty":1}]}""", 400, "coverageProbability" },
        { """{"contributions":[{"name":"a","distribution":"normal","standardUncertainty":1}],"monteCarlo":{"trials":1000000000000}}""", 422, "monteCarlo.trials" },
        { """{"contributions":[{"name":"a","distribution":"normal","standardUncertainty":1}],"monteCarlo":{"trials":0}}""", 400, "monteCarlo.trials" },
        { """{"contributions":[{"name":"a","distribution":"normal","standardUncertainty":1}],"monteCarlo":{"trials":100}}""", 400, "monteCarlo.trials" },
        { """{"contributions":[{"name":"a","distribution":"rectangular","halfWidht":1}]}""", 400, "contributions[0].halfWidht" },
        { """{"contributions":"abc"}""", 400, "contributions" },
        { """{"contributions":[{"name":"a","distribution":"normal","standardUncertainty":1}""", 400, "" },
        { """hello""", 400, "" },
        { "", 400, "" },
    };

    [Theory]
    [MemberData(nameof(BadBudgets))]
    public async Task BadInputIsAProblemNamingTheField(string body, int status, string field)
    {
        using var response = await (await Client()).PostAsync(Path, Json.Body(body));
        var problem = await Json.ProblemAsync(response, (HttpStatusCode)status);
        if (field.Length > 0)
        {
            Assert.Contains(field, Json.ErrorFields(problem));
        }
        else
        {
            Assert.False(string.IsNullOrEmpty(problem["detail"]?.GetValue<string>()));
        }
    }

    [Fact]
    public async Task EveryBadFieldIsNamedAtOnce()
    {
        var problem = await Json.PostAsync(await Client(), Path,
            """{"coverageProbability":2,"contributions":[{"name":"a","distribution":"normal","standardUncertainty":-1},{"name":"b","distribution":"nope"}]}""",
            HttpStatusCode.BadRequest);
        var fields = Json.ErrorFields(problem).ToArray();
        Assert.Contains("coverageProbability", fields);
        Assert.Contains("contributions[0].standardUncertainty", fields);
        Assert.Contains("contributions[1].distribution", fields);
    }

    [Fact]
    public async Task TruncatedJsonSaysWhereItBroke()
    {
        var problem = await Json.PostAsync(await Client(), Path, """{"contributions":[{"name":"a","distrib""", HttpStatusCode.BadRequest);
        Assert.Contains("line 1", problem["detail"]!.GetValue<string>(), StringComparison.Ordinal);
    }

    [Fact]
    public async Task ProblemsNeverLeakDotNetTypeNames()
    {
        var problem = await Json.PostAsync(await Client(), Path, """{"contributions":[{"name":"a","distribution":"normal","standardUncertainty":"abc"}]}""", HttpStatusCode.BadRequest);
        Assert.DoesNotContain("CalBudget.", problem.ToJsonString(), StringComparison.Ordinal);
        Assert.DoesNotContain("System.", problem.ToJsonString(), StringComparison.Ordinal);
    }

    [Fact]
    public async Task ProblemsCarryTheRequestId()
    {
        using var response = await (await Client()).PostAsync(Path, Json.Body("{}"));
        var problem = await Json.ProblemAsync(response, HttpStatusCode.BadRequest);
        Assert.Equal(response.Headers.GetValues("X-Request-Id").Single(), problem["requestId"]!.GetValue<string>());
    }

    private static void AssertRelative(double expected, double actual, double tolerance) =>
        Assert.True(Math.Abs(actual - expected) <= tolerance * Math.Abs(expected), $"expected {expected:R}, got {actual:R}");
}
