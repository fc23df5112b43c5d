using System.Net;

namespace CalBudget.Api.Tests;

public sealed class OrientationApiTests : IDisposable
{
    private readonly ServiceFactory _factory = new();

    public void Dispose() => _factory.Dispose();

    // y = y0 + Gamma . up with Gamma = (1e-10, -2e-10, 4e-10), y0 = 3e-11, six axes and one tilted posture.
    private const string SixPositions = """
    { "observations": [
        { "up": "+x", "fractionalOffset": 1.3e-10, "standardUncertainty": 5e-12 },
        { "up": "-x", "fractionalOffset": -7e-11, "standardUncertainty": 5e-12 },
        { "up": "+y", "fractionalOffset": -1.7e-10, "standardUncertainty": 5e-12 },
        { "up": "-y", "fractionalOffset": 2.3e-10, "standardUncertainty": 5e-12 },
        { "up": "+z", "fractionalOffset": 4.3e-10, "standardUncertainty": 5e-12 },
        { "up": [0, 0, -2], "fractionalOffset": -3.7e-10, "standardUncertainty": 5e-12 } ] }
    """;

    [Fact]
    public async Task TheSixPositionTestFitsGammaWithItsCovariance()
    {
        var r = await Json.PostAsync(await _factory.ClientAsync("technician"), "/api/v1/orientation/sensitivity", SixPositions, HttpStatusCode.OK);
        var gamma = r["gamma"]!.AsArray().Select(Json.Number).ToArray();
        Assert.Equal(1e-10, gamma[0], 1e-20);
        Assert.Equal(-2e-10, gamma[1], 1e-20);
        Assert.Equal(4e-10, gamma[2], 1e-20);
        Assert.Equal(Math.Sqrt(21) * 1e-10, Json.Number(r["magnitude"]), 1e-19);
        Assert.Equal(3e-11, Json.Number(r["offsetAtRest"]), 1e-20);
        // u^2 / 2 per component for six axes with u = 5e-12 (by hand: X^T W X = diag(6, 2, 2, 2) / u^2)
        Assert.Equal(5e-12 / Math.Sqrt(2), Json.Number(r["standardUncertainty"]![2]), 1e-20);
        Assert.Equal(2, r["degreesOfFreedom"]!.GetValue<int>());
        Assert.Equal(3, r["covariance"]!.AsArray().Count);
    }

    [Fact]
    public async Task AKnownPostureOfUseGivesTheShiftAndItsUncertainty()
    {
        var r = await Json.PostAsync(await _factory.ClientAsync("integration"), "/api/v1/orientation/shift",
            """{"gamma":[0,0,2e-9],"calibrationUp":"+z","useUp":"-z","gammaCovariance":[[0,0,0],[0,0,0],[0,0,1e-22]]}""", HttpStatusCode.OK);
        // Vig's figure: 2e-9/g turned over is 4e-9; u = |d| u(Gz) = 2e-11
        Assert.Equal(-4e-9, Json.Number(r["shift"]), 1e-21);
        Assert.Equal(2e-11, Json.Number(r["standardUncertainty"]), 1e-23);
        Assert.Null(r["halfWidth"]);
    }

    [Fact]
    public async Task ATiltLimitGivesTheLargestShiftWithinIt()
    {
        var r = await Json.PostAsync(await _factory.ClientAsync("integration"), "/api/v1/orientation/shift",
            """{"gamma":[1e-9,0,0],"calibrationUp":"+z","tiltLimitDegrees":20}""", HttpStatusCode.OK);
        // Gamma across the cap: the worst posture is tilted 20 degrees toward +x: |dy| = 1e-9 sin 20 deg (by hand)
        Assert.Equal(1e-9 * Math.Sin(20 * Math.PI / 180), Json.Number(r["halfWidth"]), 1e-21);
        Assert.Null(r["shift"]);
        var any = await Json.PostAsync(await _factory.ClientAsync("integration"), "/api/v1/orientation/shift",
            """{"gamma":[1e-9,0,0],"calibrationUp":"+z","anyOrientation":true}""", HttpStatusCode.OK);
        Assert.Equal(1e-9, Json.Number(any["halfWidth"]), 1e-21);
    }

    public static TheoryData<string, string, int, string> BadRequests => new()
    {
        { "sensitivity", """{"observations":[{"up":"+x","fractionalOffset":1},{"up":"-x","fractionalOffset":1},{"up":"+z","fractionalOffset":1}]}""", 422, "observations" },
        { "sensitivity", """{"observations":[{"up":"+x","fractionalOffset":1},{"up":"-x","fractionalOffset":1},{"up":"+y","fractionalOffset":1},{"up":"-y","fractionalOffset":2}]}""", 422, "observations" },
        { "sensitivity", """{"observations":[{"up":"+x","fractionalOffset":1},{"up":[0,0,0],"fractionalOffset":1},{"up":"+y","fractionalOffset":1},{"up":"-z","fractionalOffset":2}]}""", 400, "observations[1].up" },
        { "sensitivity", """{"observations":[{"up":"upwards","fractionalOffset":1},{"up":"-x","fractionalOffset":1},{"up":"+y","fractionalOffset":1},{"up":"-z","fractionalOffset":2}]}""", 400, "observations[0].up" },
        { "sensitivity", """{"observations":[{"up":[1,2],"fractionalOffset":1},{"up":"-x","fractionalOffset":1},{"up":"+y","fractionalOffset":1},{"up":"-z","fractionalOffset":2}]}""", 400, "observations[0].up" },
        { "sensitivity", """{"observations":[{"up":"+x"},{"up":"-x","fractionalOffset":1},{"up":"+y","fractionalOffset":1},{"up":"-z","fractionalOffset":2}]}""", 400, "observations[0].fractionalOffset" },
        { "sensitivity", """{"observations":[{"up":"+x","fractionalOffset":1,"standardUncertainty":0},{"up":"-x","fractionalOffset":1},{"up":"+y","fractionalOffset":1},{"up":"-z","fractionalOffset":2}]}""", 400, "observations[0].standardUncertainty" },
        { "sensitivity", """{}""", 400, "observations" },
        { "shift", """{"gamma":[1e-9,0,0],"calibrationUp":"+z","tiltLimitDegrees":-5}""", 400, "tiltLimitDegrees" },
        { "shift", """{"gamma":[1e-9,0,0],"calibrationUp":"+z","useUp":"-z","tiltLimitDegrees":5}""", 400, "useUp" },
        { "shift", """{"gamma":[1e-9,0,0],"calibrationUp":"+z","useUp":"-z","anyOrientation":true}""", 400, "useUp" },
        { "shift", """{"gamma":[1e-9,0,0],"calibrationUp":"+z"}""", 400, "useUp" },
        { "shift", """{"gamma":[1e-9,0],"calibrationUp":"+z","useUp":"-z"}""", 400, "gamma" },
        { "shift", """{"gamma":[1e-9,0,0],"useUp":"-z"}""", 400, "calibrationUp" },
        { "shift", """{"gamma":[1e-9,0,0],"calibrationUp":[0,0,0],"useUp":"-z"}""", 400, "calibrationUp" },
        { "shift", """{"gamma":[1e-9,0,0],"calibrationUp":"+z","useUp":"-z","gammaCovariance":[[1,0],[0,1]]}""", 400, "gammaCovariance" },
    };

    [Theory]
    [MemberData(nameof(BadRequests))]
    public async Task BadRequestsAreProblemsNamingTheField(string operation, string body, int status, string field)
    {
        var client = await _factory.ClientAsync("technician");
        var problem = await Json.ProblemAsync(await client.PostAsync($"/api/v1/orientation/{operation}", Json.Body(body)), (HttpStatusCode)status);
        Assert.Contains(field, Json.ErrorFields(problem));
    }
}
