using System.Globalization;
using System.Net;

namespace CalBudget.Api.Tests;

public sealed class AgingApiTests : IDisposable
{
    private readonly ServiceFactory _factory = new();

    public void Dispose() => _factory.Dispose();

    private static string Points(Func<double, double> y, int count, double everyDays) => "[" + string.Join(",", Enumerable.Range(0, count).Select(k =>
        $$"""{"time":"{{new DateTimeOffset(2026, 1, 1, 0, 0, 0, TimeSpan.Zero).AddDays(k * everyDays):O}}","fractionalOffset":{{y(k * everyDays).ToString("R", CultureInfo.InvariantCulture)}}}""")) + "]";

    [Fact]
    public async Task LinearAgingFitsAndPredicts()
    {
        // y = 2e-9 + 3e-12 per day, exact: the rate and the prediction a year on come back exactly
        string body = $$"""{"model":"linear","points":{{Points(t => 2e-9 + 3e-12 * t, 10, 30)}},"predictAt":"2027-01-01T00:00:00Z"}""";
        var r = await Json.PostAsync(await _factory.ClientAsync("technician"), "/api/v1/aging/fit", body, HttpStatusCode.OK);
        Assert.Equal(3e-12, Json.Number(r["parameters"]!["ratePerDay"]), 1e-20);
        Assert.Equal(2e-9, Json.Number(r["parameters"]!["offsetAtOrigin"]), 1e-18);
        Assert.Equal(2e-9 + 3e-12 * 365, Json.Number(r["prediction"]!["fractionalOffset"]), 1e-17);
        Assert.Equal(8, r["degreesOfFreedom"]!.GetValue<int>());
        Assert.Equal("2026-01-01T00:00:00+00:00", r["origin"]!.GetValue<DateTimeOffset>().ToString("yyyy-MM-ddTHH:mm:sszzz", CultureInfo.InvariantCulture));
    }

    [Fact]
    public async Task LogarithmicAgingRecoversItsParameters()
    {
        string body = $$"""{"model":"logarithmic","points":{{Points(t => 2e-9 * Math.Log(0.05 * t + 1) + 1e-8, 60, 3)}}}""";
        var r = await Json.PostAsync(await _factory.ClientAsync("integration"), "/api/v1/aging/fit", body, HttpStatusCode.OK);
        Assert.Equal(0.05, Json.Number(r["parameters"]!["bPerDay"]), 1e-6);
        Assert.Equal(2e-9, Json.Number(r["parameters"]!["a"]), 1e-13);
        Assert.Equal(["a", "bPerDay", "offsetAtOrigin"], r["parameterNames"]!.AsArray().Select(n => n!.GetValue<string>()));
    }

    public static TheoryData<string, int, string> BadRequests => new()
    {
        { """{"points":[{"time":"2026-01-01T00:00:00Z","fractionalOffset":1e-9}]}""", 400, "model" },
        { """{"model":"cubic","points":[{"time":"2026-01-01T00:00:00Z","fractionalOffset":1e-9}]}""", 400, "model" },
        { """{"model":"linear","points":[]}""", 400, "points" },
        { """{"model":"linear","points":[{"fractionalOffset":1e-9}]}""", 400, "points[0].time" },
        { """{"model":"linear","points":[{"time":"2026-01-01T00:00:00Z"}]}""", 400, "points[0].fractionalOffset" },
        { """{"model":"linear","points":[{"time":"yesterday","fractionalOffset":1e-9}]}""", 400, "points[0].time" },
        { """{"model":"linear","points":[{"time":"2026-01-01T00:00:00Z","fractionalOffset":1e-9,"standardUncertainty":-1}]}""", 400, "points[0].standardUncertainty" },
        { """{"model":"linear","points":[{"time":"2026-01-01T00:00:00Z","fractionalOffset":1e-9},{"time":"2026-02-01T00:00:00Z","fractionalOffset":1e-9}]}""", 422, "points" },
    };

    [Theory]
    [MemberData(nameof(BadRequests))]
    public async Task BadRequestsAreProblemsNamingTheField(string body, int status, string field)
    {
        var problem = await Json.ProblemAsync(await (await _factory.ClientAsync("technician")).PostAsync("/api/v1/aging/fit", Json.Body(body)), (HttpStatusCode)status);
        Assert.Contains(field, Json.ErrorFields(problem));
    }

    [Fact]
    public async Task AStraightHistoryIsNotFittedLogarithmically()
    {
        string body = $$"""{"model":"logarithmic","points":{{Points(t => 1e-10 + 1e-12 * t, 30, 1)}}}""";
        var problem = await Json.PostAsync(await _factory.ClientAsync("technician"), "/api/v1/aging/fit", body, HttpStatusCode.UnprocessableEntity);
        Assert.Contains("linear", problem["detail"]!.GetValue<string>(), StringComparison.Ordinal);
    }
}
