using System.Diagnostics;
using System.Net;

namespace CalBudget.Api.Tests;

/// <summary>
/// Request time limits (Hosting/RequestTimeLimits): work past CalBudget:RequestTimeout is stopped, the client gets 503
/// problem details with Retry-After, nothing is stored, and the service goes on answering.
/// </summary>
public sealed class TimeLimitTests : IDisposable
{
    private readonly ServiceFactory _factory = new(settings: new() { ["CalBudget:RequestTimeout"] = "00:00:00.300" });

    public void Dispose() => _factory.Dispose();

    [Fact]
    public async Task AMonteCarloRunPastTheLimitIsStoppedWith503()
    {
        // 10 million trials of 500 inputs drawn one by one (U-shaped and triangular, which no sampler combines) take about
        // 10 s on the reference machine, nearly all of it drawing the trials, where the limit stops the run
        string contributions = string.Join(",", Enumerable.Range(0, 500).Select(i => $$"""{"name":"c{{i}}","distribution":"{{(i % 2 == 0 ? "u-shaped" : "triangular")}}","halfWidth":1e-12}"""));
        string body = "{\"contributions\":[" + contributions + """],"monteCarlo":{"trials":10000000,"seed":1}}""";
        var client = await _factory.ClientAsync("technician");
        var watch = Stopwatch.StartNew();
        var response = await client.PostAsync("/api/v1/budgets/evaluate", Json.Body(body));
        var problem = await Json.ProblemAsync(response, HttpStatusCode.ServiceUnavailable);
        Assert.True(watch.Elapsed < TimeSpan.FromSeconds(5), $"stopped at the limit, not at the end of the work ({watch.Elapsed})");
        Assert.Contains("time limit", problem["title"]!.GetValue<string>(), StringComparison.Ordinal);
        Assert.Equal("5", response.Headers.GetValues("Retry-After").Single());

        // the service goes on: a small evaluation answers at once
        await Json.PostAsync(client, "/api/v1/budgets/evaluate", """{"contributions":[{"name":"a","distribution":"normal","standardUncertainty":1}]}""", HttpStatusCode.OK);
    }

    [Fact]
    public async Task AStabilityAnalysisPastTheLimitIsStoppedWith503()
    {
        var random = new Random(2);
        string values = string.Join(",", Enumerable.Range(0, 1_000_000).Select(_ => (1e-11 * random.NextDouble()).ToString("R", System.Globalization.CultureInfo.InvariantCulture)));
        string body = $$"""{"dataType":"frequency","tau0":1,"statistics":["adev","oadev","mdev","tdev","hdev","ohdev","totdev"],"averagingFactors":[{{string.Join(",", Enumerable.Range(1, 3000))}}],"values":[{{values}}]}""";
        var client = await _factory.ClientAsync("technician");
        var watch = Stopwatch.StartNew();
        await Json.ProblemAsync(await client.PostAsync("/api/v1/stability", Json.Body(body)), HttpStatusCode.ServiceUnavailable);
        Assert.True(watch.Elapsed < TimeSpan.FromSeconds(5), $"stopped at the limit ({watch.Elapsed})");
    }

    [Fact]
    public async Task ABudgetBuildPastTheLimitStoresNothing()
    {
        var tech = await _factory.ClientAsync("technician");
        long run = await LabRecords.RunWithReadingsAsync(tech, "CB-0900");
        string build = $$"""{"runId":{{run}},"templateId":"ocxo-counter","posturePolicy":{"kind":"as-calibrated"}""";
        await Json.ProblemAsync(await tech.PostAsync("/api/v1/budgets", Json.Body(build + ""","monteCarlo":{"trials":10000000,"seed":3}}""")), HttpStatusCode.ServiceUnavailable);
        var listed = await Json.ReadAsync(await tech.GetAsync($"/api/v1/budgets?runId={run}"), HttpStatusCode.OK);
        Assert.Empty(listed["items"]!.AsArray());

        // the same build without the long Monte Carlo run is stored
        await Json.PostAsync(tech, "/api/v1/budgets", build + "}", HttpStatusCode.Created);
        listed = await Json.ReadAsync(await tech.GetAsync($"/api/v1/budgets?runId={run}"), HttpStatusCode.OK);
        Assert.Single(listed["items"]!.AsArray());
    }
}
