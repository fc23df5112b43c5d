using System.Globalization;
using System.Net;
using System.Net.Http.Headers;
using System.Text;
using System.Text.Json.Nodes;
using CalBudget.Api.Budgets;
using Microsoft.Data.Sqlite;

namespace CalBudget.Api.Tests;

/// <summary>
/// Budgets built from runs and templates, checked line by line against the arithmetic of the models (templates/README.md),
/// which is written out beside each expected value; versions, two-person approval and the audit trail.
/// </summary>
public sealed class StoredBudgetsTests : IDisposable
{
    private static readonly DateTimeOffset Start = new(2026, 11, 30, 9, 0, 0, TimeSpan.Zero);
    private readonly ServiceFactory _factory = new();

    public void Dispose() => _factory.Dispose();

    // An invented instrument whose specification feeds the models (demo-style values, not check values).
    private static async Task<long> InstrumentAsync(HttpClient client, string kind, string asset)
    {
        string body = $$"""
        { "assetNumber": "{{asset}}", "customer": "Northfield Avionics", "manufacturer": "Quillon Instruments", "model": "FC-900",
          "timebase": { "oscillatorKind": "{{kind}}", "nominalFrequencyHz": 10000000,
            "specification": { "agingPerDay": 5e-10, "temperatureCoefficientPerKelvin": 1e-10, "accelerationSensitivityPerG": 1e-9, "retrace": 5e-9 } },
          "postures": [ { "name": "standing on its feet", "up": "+z" } ] }
        """;
        return (await Json.PostAsync(client, "/api/v1/instruments", body, HttpStatusCode.Created))["id"]!.GetValue<long>();
    }

    // A reference calibrated 100 days before the run, with drift 1e-14/day (u 2e-15/day), offset 1.5e-12, U 2e-12 (k = 2).
    private static async Task<long> ReferenceAsync(HttpClient client, string identity)
    {
        string body = $$"""
        { "identity": "{{identity}}", "kind": "rubidium", "nominalFrequencyHz": 10000000,
          "calibration": { "certificateNumber": "TL-2026-0417", "issuingLab": "Regional time laboratory", "date": "{{Start.AddDays(-100):O}}",
                           "fractionalOffset": 1.5e-12, "expandedUncertainty": 2e-12, "coverageFactor": 2, "driftPerDay": 1e-14, "driftUncertaintyPerDay": 2e-15 },
          "dueDate": "{{DateTimeOffset.UtcNow.AddDays(200):O}}" }
        """;
        return (await Json.PostAsync(client, "/api/v1/references", body, HttpStatusCode.Created))["id"]!.GetValue<long>();
    }

    private static double[] WhiteReadings(int n, int seed, double mean = 2e-9, double sigma = 3e-12)
    {
        var random = new Random(seed);
        return Enumerable.Range(0, n).Select(_ => mean + sigma * Math.Sqrt(-2 * Math.Log(1 - random.NextDouble())) * Math.Cos(2 * Math.PI * random.NextDouble())).ToArray();
    }

    private static async Task UploadAsync(HttpClient client, long run, double[] y)
    {
        var csv = new StringBuilder("timestamp,fractionalOffset\n");
        for (int k = 0; k < y.Length; k++)
        {
            csv.Append(CultureInfo.InvariantCulture, $"{Start.AddSeconds(k + 1):yyyy-MM-dd'T'HH:mm:ss'Z'},{y[k]:R}\n");
        }

        await Json.ReadAsync(await client.PostAsync($"/api/v1/calibrations/{run}/readings", new StringContent(csv.ToString(), Encoding.UTF8, "text/csv")), HttpStatusCode.Created);
    }

    private async Task<(HttpClient Tech, long Run, double[] Y)> RunAsync(string kind, string asset, string posture = """{ "name": "standing on its feet" }""")
    {
        var tech = await _factory.ClientAsync("technician", holder: "kim");
        long instrument = await InstrumentAsync(tech, kind, asset);
        long reference = await ReferenceAsync(tech, "RB-" + asset);
        long run = (await Json.PostAsync(tech, "/api/v1/calibrations", LabRecords.RunBody(instrument, reference, posture), HttpStatusCode.Created))["id"]!.GetValue<long>();
        var y = WhiteReadings(200, asset.Aggregate(17, (h, c) => (h * 31 + c) & 0xFFFF)); // a stable seed (string hashes change from run to run)
        await UploadAsync(tech, run, y);
        return (tech, run, y);
    }

    private static string Build(long run, string template, string policy = """{ "kind": "as-calibrated" }""", string extra = "") =>
        $$"""{ "runId": {{run}}, "templateId": "{{template}}", "posturePolicy": {{policy}}{{extra}} }""";

    private static double U(JsonNode result, string name) =>
        result["contributions"]!.AsArray().Single(c => c!["name"]!.GetValue<string>() == name)!["standardUncertainty"]!.GetValue<double>();

    private static void Near(double expected, double actual, string what) =>
        Assert.True(Math.Abs(expected - actual) <= 1e-12 * Math.Abs(expected) + 1e-30, $"{what}: expected {expected:R}, got {actual:R}");

    // The reference line by hand: 100 days from its calibration to the run; y_ref = 1.5e-12 + 1e-14 x 100 = 2.5e-12;
    // u = sqrt((2e-12 / 2)^2 + (2e-15 x 100)^2) = sqrt(1e-24 + 4e-26) = 1.0198039e-12 (JCGM 100 4.3.3 for U/k).
    private const double ReferenceEstimate = 2.5e-12;
    private static readonly double ReferenceU = Math.Sqrt(1e-24 + 4e-26);

    // The run records a temperature variation of 0.4 K (LabRecords.RunBody): 1e-10/K x 0.4 K = 4e-11, rectangular.
    private static readonly double RunTemperatureU = 1e-10 * 0.4 / Math.Sqrt(3);

    // Type A by hand for white FM readings: the standard deviation of the mean, s / sqrt(n) with n - 1 = 199 degrees of freedom.
    private static (double Mean, double Sdom) TypeA(double[] y)
    {
        double mean = y.Average();
        double s = Math.Sqrt(y.Sum(v => (v - mean) * (v - mean)) / (y.Length - 1));
        return (mean, s / Math.Sqrt(y.Length));
    }

    private static void CheckTotals(JsonNode result, IReadOnlyDictionary<string, double> expectedU, double expectedY)
    {
        foreach (var (name, u) in expectedU)
        {
            Near(u, U(result, name), name);
        }

        Assert.Equal(expectedU.Keys.Order(StringComparer.Ordinal), result["contributions"]!.AsArray().Select(c => c!["name"]!.GetValue<string>()).Order(StringComparer.Ordinal));
        // u_c = sqrt(sum u_i^2) for an uncorrelated additive model with c_i = 1 (JCGM 100 eq. 10)
        Near(Math.Sqrt(expectedU.Values.Sum(u => u * u)), result["combinedStandardUncertainty"]!.GetValue<double>(), "u_c");
        Near(expectedY, result["estimate"]!.GetValue<double>(), "y");
        double k = result["coverageFactor"]!.GetValue<double>();
        Assert.InRange(k, 2.0, 2.01); // nu_eff is large here: t_0.9545 -> 2 (JCGM 100 Table G.2)
        Near(k * result["combinedStandardUncertainty"]!.GetValue<double>(), result["expandedUncertainty"]!.GetValue<double>(), "U = k u_c");
    }

    // The calibration lines every quartz template shares, worked by hand for the white readings of RunAsync: the readings
    // scatter by s = 3e-12 >= the resolution 1e-12, so quantization is in Type A and the comparator adds nothing (no
    // systematic error stated); the specification states no warm-up, so that line is 0.
    private static Dictionary<string, double> QuartzCalibration(double sdom) => new()
    {
        ["reference standard"] = ReferenceU,
        ["comparator"] = 0,
        ["repeatability"] = sdom,
        ["temperature during the run"] = RunTemperatureU,
    };

    [Fact]
    public async Task TheOcxoCounterBudgetKeepsTheCalibrationResultApartFromTheInUsePrediction()
    {
        var (tech, run, y) = await RunAsync("OCXO", "CB-0042");
        var budget = await Json.PostAsync(tech, "/api/v1/budgets", Build(run, "ocxo-counter", """{ "kind": "tilt-limit", "tiltLimitDegrees": 20 }"""), HttpStatusCode.Created);
        var v = budget["latest"]!;
        Assert.Equal("draft", v["state"]!.GetValue<string>());
        var (mean, sdom) = TypeA(y);
        var typeA = v["lines"]!.AsArray().Single(l => l!["name"]!.GetValue<string>() == "repeatability")!;
        Assert.Contains("StandardDeviationOfMean", typeA["source"]!.GetValue<string>(), StringComparison.Ordinal);
        // a finite nu (n - 1 = 199) makes the Type A input a scaled, shifted t for Monte Carlo (JCGM 101 6.4.9)
        Assert.Equal("student-t", typeA["input"]!["distribution"]!.GetValue<string>());
        Assert.Equal(199, typeA["input"]!["degreesOfFreedom"]!.GetValue<double>());
        // the calibration result: the measurement's own contributions only
        var calibration = QuartzCalibration(sdom);
        calibration["warm-up"] = 0;
        CheckTotals(v["result"]!, calibration, mean + ReferenceEstimate);
        Assert.Equal("GUM", v["calibrationResult"]!["governs"]!.GetValue<string>());
        // 2 x sqrt(ReferenceU^2 + sdom^2 + RunTemperatureU^2) is about 4.6e-11, above the CMC of 2e-12: no floor, within the scope
        Assert.False(v["calibrationResult"]!["cmcApplied"]!.GetValue<bool>());
        Assert.True(v["calibrationResult"]!["withinScope"]!.GetValue<bool>());
        Near(v["result"]!["expandedUncertainty"]!.GetValue<double>(), v["calibrationResult"]!["expandedUncertainty"]!.GetValue<double>(), "stated U");

        // the in-use prediction: the calibration lines and the in-use lines, over the template's 365 days
        var prediction = v["prediction"]!;
        var inUse = new Dictionary<string, double>(calibration)
        {
            ["orientation of use"] = 1e-9 * 2 * Math.Sin(10 * Math.PI / 180) / Math.Sqrt(3),    // |Gamma| x chord 2 sin(20 deg / 2) = 3.473e-10
            ["temperature of use"] = 1e-10 * 5 / Math.Sqrt(3),                                  // 1e-10/K x 5 K
            ["aging"] = 5e-10 * 365 / Math.Sqrt(3),                                             // specified 5e-10/day x 365 days (no aging fit yet)
            ["retrace"] = 5e-9 / Math.Sqrt(3),
        };
        CheckTotals(prediction["result"]!, inUse, mean + ReferenceEstimate);
        Assert.Equal(365, prediction["holdDays"]!.GetValue<double>());
        Assert.Equal(["orientation of use", "temperature of use", "aging", "retrace"], prediction["lines"]!.AsArray().Select(l => l!.GetValue<string>()));
        string statement = prediction["statement"]!.GetValue<string>();
        Assert.StartsWith("In-use prediction (not the uncertainty of the calibration result)", statement, StringComparison.Ordinal);
        Assert.Contains("until 2027-11-30", statement, StringComparison.Ordinal);
        Assert.Contains("within 20° of the calibration posture", statement, StringComparison.Ordinal);
        Assert.Contains("at 23.1 ± 5 °C", statement, StringComparison.Ordinal);
        Assert.All(v["lines"]!.AsArray(), l => Assert.Contains(l!["stage"]!.GetValue<string>(), new[] { "calibration", "in-use" }));
    }

    [Fact]
    public async Task TheTcxoGeneratorPredictionTakesTheKnownPostureOfUseAndTheCalibrationResultStaysAsCalibrated()
    {
        var (tech, run, y) = await RunAsync("TCXO", "CB-0051");
        var budget = await Json.PostAsync(tech, "/api/v1/budgets", Build(run, "tcxo-generator", """{ "kind": "known", "useUp": "-x" }"""), HttpStatusCode.Created);
        var (mean, sdom) = TypeA(y);
        var calibration = QuartzCalibration(sdom);
        CheckTotals(budget["latest"]!["result"]!, calibration, mean + ReferenceEstimate);
        CheckTotals(budget["latest"]!["prediction"]!["result"]!, new Dictionary<string, double>(calibration)
        {
            ["orientation of use"] = 1e-9 * Math.Sqrt(2) / Math.Sqrt(3),                       // |up_use - up_cal| = |(-1,0,0) - (0,0,1)| = sqrt 2
            ["temperature of use"] = 1e-10 * 10 / Math.Sqrt(3),                                 // band 10 K in this template
            ["aging"] = 5e-10 * 365 / Math.Sqrt(3),
            ["supply"] = 1e-8 / Math.Sqrt(3),
        }, mean + ReferenceEstimate);
        Assert.Contains("in the posture of use with up vector (-1, 0, 0)", budget["latest"]!["prediction"]!["statement"]!.GetValue<string>(), StringComparison.Ordinal);
        // the value stated for the calibration posture does not move; the prediction carries the posture of use
        Assert.Equal(budget["latest"]!["result"]!["estimate"]!.GetValue<double>(), budget["latest"]!["calibrationResult"]!["estimate"]!.GetValue<double>());
    }

    [Fact]
    public async Task AVersionMadeBeforeTheTwoResultsStaysReadableWithItsOneResult()
    {
        var (tech, run, _) = await RunAsync("OCXO", "CB-0060");
        var budget = await Json.PostAsync(tech, "/api/v1/budgets", Build(run, "ocxo-counter"), HttpStatusCode.Created);
        string result = budget["latest"]!["result"]!.ToJsonString();
        // what a version of before migration 0011 looks like: no stages (the trigger that fixes them goes first)
        using (var connection = new SqliteConnection($"Data Source={System.IO.Path.Combine(_factory.DataDirectory, "calbudget.db")}"))
        {
            connection.Open();
            using var command = connection.CreateCommand();
            command.CommandText = "DROP TRIGGER budget_versions_stages_fixed; UPDATE budget_versions SET stages = NULL;";
            command.ExecuteNonQuery();
        }

        var old = await Json.ReadAsync(await tech.GetAsync($"/api/v1/budgets/{budget["id"]}/versions/1"), HttpStatusCode.OK);
        Assert.Equal(result, old["result"]!.ToJsonString());
        Assert.Null(old["calibrationResult"]);
        Assert.Null(old["prediction"]);
        var approver = await _factory.ClientAsync("approver", holder: "lee");
        await Json.PostAsync(approver, $"/api/v1/budgets/{budget["id"]}/versions/1/approve", "{}", HttpStatusCode.OK);
        var cert = await Json.PostAsync(tech, "/api/v1/certificates",
            $$"""{ "budgetId": {{budget["id"]}}, "version": 1, "receivedAt": "2026-11-27T00:00:00Z", "itemCondition": "no visible damage" }""", HttpStatusCode.Created);
        Assert.Equal(old["result"]!["expandedUncertainty"]!.GetValue<double>(), cert["result"]!["expandedUncertainty"]!.GetValue<double>());
        var page = await (await _factory.ClientAsync("auditor")).GetAsync($"/api/v1/budgets/{budget["id"]}");
        Assert.Equal(HttpStatusCode.OK, page.StatusCode);
    }

    [Fact]
    public async Task TheRubidiumReferenceBudgetHasItsStatedTerms()
    {
        var (tech, run, y) = await RunAsync("rubidium", "CB-0188");
        var budget = await Json.PostAsync(tech, "/api/v1/budgets", Build(run, "rubidium-reference"), HttpStatusCode.Created);
        var (mean, sdom) = TypeA(y);
        var calibration = QuartzCalibration(sdom);
        calibration["warm-up"] = 0;
        calibration["magnetic field of the bench"] = 2e-13 / Math.Sqrt(3);
        CheckTotals(budget["latest"]!["result"]!, calibration, mean + ReferenceEstimate);
        CheckTotals(budget["latest"]!["prediction"]!["result"]!, new Dictionary<string, double>(calibration)
        {
            ["temperature of use"] = 1e-10 * 3 / Math.Sqrt(3),
            ["aging"] = 5e-10 * 365 / Math.Sqrt(3),
            ["retrace"] = 5e-9 / Math.Sqrt(3),
            ["magnetic field of use"] = 2e-12 / Math.Sqrt(3),
        }, mean + ReferenceEstimate);
    }

    [Fact]
    public async Task TheGnssReferenceBudgetNeedsNoSpecification()
    {
        var (tech, run, y) = await RunAsync("GNSS-disciplined", "CB-0150");
        var budget = await Json.PostAsync(tech, "/api/v1/budgets", Build(run, "gnss-reference"), HttpStatusCode.Created);
        var (mean, sdom) = TypeA(y);
        var calibration = new Dictionary<string, double>
        {
            ["reference standard"] = ReferenceU,
            ["comparator"] = 0,
            ["repeatability"] = sdom,
            ["steering during the run"] = 5e-13,                                                // stated normal u
        };
        CheckTotals(budget["latest"]!["result"]!, calibration, mean + ReferenceEstimate);
        CheckTotals(budget["latest"]!["prediction"]!["result"]!, new Dictionary<string, double>(calibration)
        {
            ["holdover and steering in use"] = 2e-12,
            ["antenna and cable delay changes"] = 1e-13 / Math.Sqrt(3),
        }, mean + ReferenceEstimate);
    }

    [Theory]
    [InlineData("OCXO", "ocxo-counter")]
    [InlineData("TCXO", "tcxo-generator")]
    [InlineData("rubidium", "rubidium-reference")]
    [InlineData("GNSS-disciplined", "gnss-reference")]
    public async Task EveryTemplatesBudgetReevaluatesFromItsSnapshotToTheLastDigit(string kind, string template)
    {
        var (tech, run, _) = await RunAsync(kind, "R-" + template);
        var budget = await Json.PostAsync(tech, "/api/v1/budgets",
            Build(run, template, """{ "kind": "any" }""", """, "monteCarlo": { "trials": 20000 }"""), HttpStatusCode.Created);
        var stored = await Json.ReadAsync(await tech.GetAsync($"/api/v1/budgets/{budget["id"]}/versions/1"), HttpStatusCode.OK);
        // what an auditor does: the snapshot's evaluation request, sent to the stateless evaluation, gives the stored result
        var again = await Json.PostAsync(tech, "/api/v1/budgets/evaluate", stored["snapshot"]!["evaluate"]!.ToJsonString(), HttpStatusCode.OK);
        Assert.Equal(stored["result"]!.ToJsonString(), again.ToJsonString());
        Assert.NotNull(stored["result"]!["monteCarlo"]);
        // and the prediction's own request gives the stored prediction
        var predicted = await Json.PostAsync(tech, "/api/v1/budgets/evaluate", stored["prediction"]!["evaluate"]!.ToJsonString(), HttpStatusCode.OK);
        Assert.Equal(stored["prediction"]!["result"]!.ToJsonString(), predicted.ToJsonString());
    }

    [Fact]
    public async Task ApprovalTakesAnotherPersonAndFixesTheVersion()
    {
        var (tech, run, _) = await RunAsync("OCXO", "CB-0043");
        var budget = await Json.PostAsync(tech, "/api/v1/budgets", Build(run, "ocxo-counter", """{ "kind": "any" }"""), HttpStatusCode.Created);
        string path = $"/api/v1/budgets/{budget["id"]}";
        Assert.Equal(HttpStatusCode.Forbidden, (await tech.PostAsync($"{path}/versions/1/approve", Json.Body("{}"))).StatusCode);
        var sameHolder = await _factory.ClientAsync("approver", holder: "kim");
        var own = await Json.ProblemAsync(await sameHolder.PostAsync($"{path}/versions/1/approve", Json.Body("{}")), HttpStatusCode.Forbidden);
        Assert.Contains("second person", own["detail"]!.GetValue<string>(), StringComparison.Ordinal);

        var approver = await _factory.ClientAsync("approver", holder: "lee");
        var approved = await Json.PostAsync(approver, $"{path}/versions/1/approve", """{ "meaning": "Reviewed against procedure TP-12 and approved." }""", HttpStatusCode.OK);
        Assert.Equal("approved", approved["state"]!.GetValue<string>());
        Assert.Equal("Reviewed against procedure TP-12 and approved.", approved["signatureMeaning"]!.GetValue<string>());
        Assert.StartsWith("approver-", approved["approvedBy"]!.GetValue<string>(), StringComparison.Ordinal);
        await Json.ProblemAsync(await approver.PostAsync($"{path}/versions/1/approve", Json.Body("{}")), HttpStatusCode.Conflict);

        // a change after approval is a new draft; approving it supersedes the first
        var revise = new HttpRequestMessage(HttpMethod.Post, $"{path}/versions") { Content = Json.Body("""{ "reason": "the customer mounts it within 15 degrees of level", "posturePolicy": { "kind": "tilt-limit", "tiltLimitDegrees": 15 } }""") };
        revise.Headers.IfMatch.Add(new EntityTagHeaderValue("\"1\""));
        var second = await Json.ReadAsync(await tech.SendAsync(revise), HttpStatusCode.Created);
        Assert.Equal(2, second["latest"]!["number"]!.GetValue<int>());
        Assert.Equal("draft", second["latest"]!["state"]!.GetValue<string>());
        await Json.PostAsync(approver, $"{path}/versions/2/approve", "{}", HttpStatusCode.OK);
        var versions = await Json.ReadAsync(await tech.GetAsync($"{path}/versions"), HttpStatusCode.OK);
        Assert.Equal(["superseded", "approved"], versions.AsArray().Select(x => x!["state"]!.GetValue<string>()));

        // the store refuses to change an approved or superseded version, whoever asks
        using var connection = new SqliteConnection($"Data Source={System.IO.Path.Combine(_factory.DataDirectory, "calbudget.db")}");
        connection.Open();
        using var edit = connection.CreateCommand();
        edit.CommandText = "UPDATE budget_versions SET result = '{}' WHERE number = 2";
        Assert.Contains("never changed", Assert.Throws<SqliteException>(() => edit.ExecuteNonQuery()).Message, StringComparison.Ordinal);
    }

    [Fact]
    public async Task ARevisionNeedsAReasonAndTheCurrentVersionAndIsDiffedLineByLine()
    {
        var (tech, run, _) = await RunAsync("OCXO", "CB-0044");
        var budget = await Json.PostAsync(tech, "/api/v1/budgets", Build(run, "ocxo-counter", """{ "kind": "tilt-limit", "tiltLimitDegrees": 20 }"""), HttpStatusCode.Created);
        string path = $"/api/v1/budgets/{budget["id"]}";
        await Json.ProblemAsync(await tech.PostAsync($"{path}/versions", Json.Body("""{ "reason": "x" }""")), (HttpStatusCode)428);
        HttpRequestMessage Revise(string body, string etag)
        {
            var r = new HttpRequestMessage(HttpMethod.Post, $"{path}/versions") { Content = Json.Body(body) };
            r.Headers.IfMatch.Add(new EntityTagHeaderValue(etag));
            return r;
        }

        var noReason = await Json.ProblemAsync(await tech.SendAsync(Revise("""{ "posturePolicy": { "kind": "any" } }""", "\"1\"")), HttpStatusCode.BadRequest);
        Assert.Equal(["reason"], Json.ErrorFields(noReason));
        await Json.ReadAsync(await tech.SendAsync(Revise("""{ "reason": "used in any orientation", "posturePolicy": { "kind": "any" } }""", "\"1\"")), HttpStatusCode.Created);
        await Json.ProblemAsync(await tech.SendAsync(Revise("""{ "reason": "again" }""", "\"1\"")), HttpStatusCode.PreconditionFailed);

        var diff = await Json.ReadAsync(await tech.GetAsync($"{path}/diff?from=1&to=2"), HttpStatusCode.OK);
        var rows = diff["contributions"]!.AsArray().ToDictionary(r => r!["name"]!.GetValue<string>(), r => r!);
        Assert.Equal("changed", rows["orientation of use"]["change"]!.GetValue<string>());
        Assert.All(rows.Where(r => r.Key != "orientation of use"), r => Assert.Equal("same", r.Value["change"]!.GetValue<string>()));
        // any orientation: 2 |Gamma| against 2 sin(10 deg) |Gamma|, both rectangular (lines of the in-use prediction)
        Near(2e-9 / Math.Sqrt(3), rows["orientation of use"]["standardUncertainty"]![1]!.GetValue<double>(), "u after");
        Near(2e-9 * Math.Sin(10 * Math.PI / 180) / Math.Sqrt(3), rows["orientation of use"]["standardUncertainty"]![0]!.GetValue<double>(), "u before");
        Assert.Equal(["in-use", "in-use"], rows["orientation of use"]["stage"]!.AsArray().Select(x => x!.GetValue<string>()));
        // the calibration result does not move with the posture of use; the prediction does
        Assert.Equal(diff["expandedUncertainty"]![0]!.GetValue<double>(), diff["expandedUncertainty"]![1]!.GetValue<double>());
        Assert.True(diff["predictionExpandedUncertainty"]![1]!.GetValue<double>() > diff["predictionExpandedUncertainty"]![0]!.GetValue<double>());
    }

    [Fact]
    public async Task BudgetsAreListedByInstrumentAndByRunEachWithItsNewestVersion()
    {
        var (tech, first, _) = await RunAsync("OCXO", "CB-0046");
        long instrument = (await Json.ReadAsync(await tech.GetAsync($"/api/v1/calibrations/{first}"), HttpStatusCode.OK))["instrumentId"]!.GetValue<long>();
        long reference = (await Json.ReadAsync(await tech.GetAsync($"/api/v1/calibrations/{first}"), HttpStatusCode.OK))["referenceId"]!.GetValue<long>();
        long second = (await Json.PostAsync(tech, "/api/v1/calibrations", LabRecords.RunBody(instrument, reference), HttpStatusCode.Created))["id"]!.GetValue<long>();
        await UploadAsync(tech, second, WhiteReadings(200, 46));
        var (_, other, _) = await RunAsync("OCXO", "CB-0047");
        var revised = await Json.PostAsync(tech, "/api/v1/budgets", Build(first, "ocxo-counter"), HttpStatusCode.Created);
        await Json.PostAsync(tech, "/api/v1/budgets", Build(second, "ocxo-counter"), HttpStatusCode.Created);
        await Json.PostAsync(tech, "/api/v1/budgets", Build(other, "ocxo-counter"), HttpStatusCode.Created);
        var revise = new HttpRequestMessage(HttpMethod.Post, $"/api/v1/budgets/{revised["id"]}/versions") { Content = Json.Body("""{ "reason": "used in any orientation", "posturePolicy": { "kind": "any" } }""") };
        revise.Headers.IfMatch.Add(new EntityTagHeaderValue("\"1\""));
        await Json.ReadAsync(await tech.SendAsync(revise), HttpStatusCode.Created);

        var ofInstrument = (await Json.ReadAsync(await tech.GetAsync($"/api/v1/budgets?instrumentId={instrument}"), HttpStatusCode.OK))["items"]!.AsArray();
        Assert.Equal([first, second], ofInstrument.Select(b => b!["runId"]!.GetValue<long>()));
        Assert.Equal([2, 1], ofInstrument.Select(b => b!["latest"]!["number"]!.GetValue<int>()));
        Assert.Equal("used in any orientation", ofInstrument[0]!["latest"]!["reason"]!.GetValue<string>());
        var ofRun = (await Json.ReadAsync(await tech.GetAsync($"/api/v1/budgets?instrumentId={instrument}&runId={second}"), HttpStatusCode.OK))["items"]!.AsArray();
        Assert.Equal([second], ofRun.Select(b => b!["runId"]!.GetValue<long>()));
        var ofOther = (await Json.ReadAsync(await tech.GetAsync($"/api/v1/budgets?runId={other}"), HttpStatusCode.OK))["items"]!.AsArray();
        Assert.Single(ofOther);
    }

    [Fact]
    public async Task AnOverrideReplacesALineAndNeedsAReason()
    {
        var (tech, run, _) = await RunAsync("OCXO", "CB-0045");
        var refused = await Json.ProblemAsync(await tech.PostAsync("/api/v1/budgets", Json.Body(Build(run, "ocxo-counter", extra:
            """, "overrides": [ { "name": "aging", "distribution": "rectangular", "halfWidth": 1e-8 } ]"""))), HttpStatusCode.BadRequest);
        Assert.Equal(["overrides[0].reason"], Json.ErrorFields(refused));
        var budget = await Json.PostAsync(tech, "/api/v1/budgets", Build(run, "ocxo-counter", extra:
            """, "overrides": [ { "name": "aging", "reason": "the result holds for 30 days only", "distribution": "rectangular", "halfWidth": 1.5e-8 } ]"""), HttpStatusCode.Created);
        Near(1.5e-8 / Math.Sqrt(3), U(budget["latest"]!["prediction"]!["result"]!, "aging"), "aging overridden");
        Assert.DoesNotContain(budget["latest"]!["result"]!["contributions"]!.AsArray(), c => c!["name"]!.GetValue<string>() == "aging");
        var line = budget["latest"]!["lines"]!.AsArray().Single(l => l!["name"]!.GetValue<string>() == "aging")!;
        Assert.Equal("override", line["model"]!.GetValue<string>());
        Assert.Contains("30 days only", line["source"]!.GetValue<string>(), StringComparison.Ordinal);
        var unknown = await Json.ProblemAsync(await tech.PostAsync("/api/v1/budgets", Json.Body(Build(run, "ocxo-counter", extra:
            """, "overrides": [ { "name": "humidity", "reason": "r", "distribution": "rectangular", "halfWidth": 1e-8 } ]"""))), HttpStatusCode.UnprocessableEntity);
        Assert.Equal(["overrides.humidity"], Json.ErrorFields(unknown));
    }

    [Fact]
    public async Task WhatABudgetCannotBeBuiltFromIsNamed()
    {
        var tech = await _factory.ClientAsync("technician");
        long instrument = await InstrumentAsync(tech, "OCXO", "CB-0046");
        long reference = await ReferenceAsync(tech, "RB-46");
        long empty = (await Json.PostAsync(tech, "/api/v1/calibrations", LabRecords.RunBody(instrument, reference), HttpStatusCode.Created))["id"]!.GetValue<long>();
        var noReadings = await Json.ProblemAsync(await tech.PostAsync("/api/v1/budgets", Json.Body(Build(empty, "ocxo-counter"))), HttpStatusCode.UnprocessableEntity);
        Assert.Equal(["contributions.repeatability"], Json.ErrorFields(noReadings));
        var template = await Json.ProblemAsync(await tech.PostAsync("/api/v1/budgets", Json.Body(Build(empty, "cesium-fountain"))), HttpStatusCode.UnprocessableEntity);
        Assert.Equal(["templateId"], Json.ErrorFields(template));
        var kind = await Json.ProblemAsync(await tech.PostAsync("/api/v1/budgets", Json.Body(Build(empty, "gnss-reference"))), HttpStatusCode.UnprocessableEntity);
        Assert.Equal(["templateId"], Json.ErrorFields(kind));
        var run = await Json.ProblemAsync(await tech.PostAsync("/api/v1/budgets", Json.Body(Build(9999, "ocxo-counter"))), HttpStatusCode.UnprocessableEntity);
        Assert.Equal(["runId"], Json.ErrorFields(run));
        var policy = await Json.ProblemAsync(await tech.PostAsync("/api/v1/budgets", Json.Body(Build(empty, "ocxo-counter", """{ "kind": "tilt-limit" }"""))), HttpStatusCode.BadRequest);
        Assert.Equal(["posturePolicy.tiltLimitDegrees"], Json.ErrorFields(policy));
        Assert.Empty((await Json.ReadAsync(await tech.GetAsync("/api/v1/budgets"), HttpStatusCode.OK))["items"]!.AsArray());
    }

    [Fact]
    public async Task AMeasuredVectorFromATipOverTestDrivesTheOrientationLine()
    {
        // six runs, one per axis posture, with readings y = y0 + Gamma . up + white noise (Gamma invented: [1, -2, 4] x 1e-10 per g)
        var tech = await _factory.ClientAsync("technician");
        long instrument = await InstrumentAsync(tech, "OCXO", "CB-0102");
        long reference = await ReferenceAsync(tech, "RB-102");
        double[] gamma = [1e-10, -2e-10, 4e-10];
        var runs = new List<long>();
        var observations = new List<string>();
        foreach (var (axis, up) in new[] { ("+x", new[] { 1.0, 0, 0 }), ("-x", [-1.0, 0, 0]), ("+y", [0, 1.0, 0]), ("-y", [0, -1.0, 0]), ("+z", [0, 0, 1.0]), ("-z", [0, 0, -1.0]) })
        {
            long run = (await Json.PostAsync(tech, "/api/v1/calibrations", LabRecords.RunBody(instrument, reference, $$"""{ "up": "{{axis}}" }"""), HttpStatusCode.Created))["id"]!.GetValue<long>();
            var y = WhiteReadings(200, runs.Count + 7, 3e-11 + gamma[0] * up[0] + gamma[1] * up[1] + gamma[2] * up[2], 2e-13);
            await UploadAsync(tech, run, y);
            runs.Add(run);
            var (mean, sdom) = TypeA(y);
            observations.Add(string.Create(CultureInfo.InvariantCulture, $$"""{ "up": "{{axis}}", "fractionalOffset": {{mean:R}}, "standardUncertainty": {{sdom:R}} }"""));
        }

        var test = await Json.PostAsync(tech, $"/api/v1/instruments/{instrument}/sensitivity-tests", $$"""{ "runIds": [{{string.Join(",", runs)}}] }""", HttpStatusCode.Created);
        // the same fit through the analytics endpoint, from the runs' means and Type A uncertainties
        var fit = await Json.PostAsync(tech, "/api/v1/orientation/sensitivity", $$"""{ "observations": [{{string.Join(",", observations)}}] }""", HttpStatusCode.OK);
        for (int i = 0; i < 3; i++)
        {
            Near(Json.Number(fit["gamma"]![i]), Json.Number(test["gamma"]![i]), $"gamma[{i}]");
            Assert.Equal(gamma[i], Json.Number(test["gamma"]![i]), 1e-12);
        }

        // a budget for use on the left side: the orientation line is the correction Gamma . (up_use - up_cal) with u from the covariance
        var budget = await Json.PostAsync(tech, "/api/v1/budgets", Build(runs[4], "ocxo-counter", """{ "kind": "known", "useUp": "-x" }"""), HttpStatusCode.Created);
        var shift = await Json.PostAsync(tech, "/api/v1/orientation/shift",
            $$"""{ "gamma": {{test["gamma"]!.ToJsonString()}}, "gammaCovariance": {{test["covariance"]!.ToJsonString()}}, "calibrationUp": "+z", "useUp": "-x" }""", HttpStatusCode.OK);
        var line = budget["latest"]!["lines"]!.AsArray().Single(l => l!["name"]!.GetValue<string>() == "orientation of use")!;
        Near(Json.Number(shift["shift"]), Json.Number(line["input"]!["estimate"]), "orientation correction");
        Near(Json.Number(shift["standardUncertainty"]), U(budget["latest"]!["prediction"]!["result"]!, "orientation of use"), "orientation u");
        // nu = n - 4 = 2 of the six-posture fit, carried into the line
        Assert.Equal(2, Json.Number(line["input"]!["degreesOfFreedom"]));
        // the known posture's correction moves the prediction, never the value stated for the calibration posture
        Near(Json.Number(budget["latest"]!["result"]!["estimate"]) + Json.Number(shift["shift"]), Json.Number(budget["latest"]!["prediction"]!["result"]!["estimate"]), "predicted y");
        Assert.Contains("tip-over test", line["source"]!.GetValue<string>(), StringComparison.Ordinal);
        var tooFew = await Json.ProblemAsync(await tech.PostAsync($"/api/v1/instruments/{instrument}/sensitivity-tests", Json.Body($$"""{ "runIds": [{{runs[0]}},{{runs[1]}},{{runs[2]}}] }""")), HttpStatusCode.BadRequest);
        Assert.Equal(["runIds"], Json.ErrorFields(tooFew));
        var coplanar = await Json.ProblemAsync(await tech.PostAsync($"/api/v1/instruments/{instrument}/sensitivity-tests", Json.Body($$"""{ "runIds": [{{runs[0]}},{{runs[1]}},{{runs[2]}},{{runs[3]}}] }""")), HttpStatusCode.UnprocessableEntity);
        Assert.Equal(["runIds"], Json.ErrorFields(coplanar));
    }

    [Fact]
    public async Task TheAuditTrailVerifiesAndNamesAnAlteredEntry()
    {
        var (tech, run, _) = await RunAsync("OCXO", "CB-0047");
        var budget = await Json.PostAsync(tech, "/api/v1/budgets", Build(run, "ocxo-counter"), HttpStatusCode.Created);
        var auditor = await _factory.ClientAsync("auditor");
        var verify = await Json.ReadAsync(await auditor.GetAsync("/api/v1/audit/verify"), HttpStatusCode.OK);
        Assert.True(verify["intact"]!.GetValue<bool>());
        long entries = verify["entries"]!.GetValue<long>();
        Assert.True(entries >= 7); // keys, instrument, reference, run, readings, budget
        var budgets = await Json.ReadAsync(await auditor.GetAsync("/api/v1/audit?entityType=budget"), HttpStatusCode.OK);
        var entry = budgets["items"]!.AsArray().Single()!;
        Assert.Equal($"{budget["id"]}/1", entry["entityId"]!.GetValue<string>());
        Assert.Equal(budget["latest"]!["result"]!.ToJsonString(), entry["state"]!["result"]!.ToJsonString());
        Assert.Equal(HttpStatusCode.Forbidden, (await tech.GetAsync("/api/v1/audit")).StatusCode);

        // someone with the file alters an entry behind the service's back (the append-only trigger must go first)
        long seq = budgets["items"]![0]!["seq"]!.GetValue<long>() - 2;
        using (var connection = new SqliteConnection($"Data Source={System.IO.Path.Combine(_factory.DataDirectory, "calbudget.db")}"))
        {
            connection.Open();
            using var update = connection.CreateCommand();
            update.CommandText = "UPDATE audit_entries SET actor = 'somebody else' WHERE seq = $seq";
            update.Parameters.AddWithValue("$seq", seq);
            Assert.Throws<SqliteException>(() => update.ExecuteNonQuery());
            using var drop = connection.CreateCommand();
            drop.CommandText = "DROP TRIGGER audit_entries_no_edit";
            drop.ExecuteNonQuery();
            update.ExecuteNonQuery();
        }

        var broken = await Json.ReadAsync(await auditor.GetAsync("/api/v1/audit/verify"), HttpStatusCode.OK);
        Assert.False(broken["intact"]!.GetValue<bool>());
        Assert.Equal(seq, broken["firstBadSeq"]!.GetValue<long>());
        Assert.Contains("hash", broken["problem"]!.GetValue<string>(), StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("UPDATE audit_entries SET state = replace(state, 'CB-0048', 'CB-0049') WHERE seq = $seq", "state")]
    [InlineData("DELETE FROM audit_entries WHERE seq = $seq", "missing")]
    [InlineData("UPDATE audit_entries SET previous_sha256 = entry_sha256 WHERE seq = $seq", "link")]
    [InlineData("UPDATE audit_entries SET reason = 'tidied up' WHERE seq = $seq", "fields")]
    public async Task EachKindOfAlterationIsNamedAtTheEntryWhereItIs(string alteration, string named)
    {
        var (_, _, _) = await RunAsync("OCXO", "CB-0048");
        var auditor = await _factory.ClientAsync("auditor");
        var instruments = await Json.ReadAsync(await auditor.GetAsync("/api/v1/audit?entityType=instrument"), HttpStatusCode.OK);
        long seq = instruments["items"]![0]!["seq"]!.GetValue<long>();
        using (var connection = new SqliteConnection($"Data Source={System.IO.Path.Combine(_factory.DataDirectory, "calbudget.db")}"))
        {
            connection.Open();
            using var command = connection.CreateCommand();
            command.CommandText = "DROP TRIGGER audit_entries_no_edit; DROP TRIGGER IF EXISTS audit_entries_no_delete;";
            command.ExecuteNonQuery();
            command.CommandText = alteration;
            command.Parameters.AddWithValue("$seq", seq);
            Assert.Equal(1, command.ExecuteNonQuery());
        }

        var broken = await Json.ReadAsync(await auditor.GetAsync("/api/v1/audit/verify"), HttpStatusCode.OK);
        Assert.False(broken["intact"]!.GetValue<bool>());
        Assert.Equal(seq, broken["firstBadSeq"]!.GetValue<long>());
        Assert.Contains(named, broken["problem"]!.GetValue<string>(), StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("{", "$")]
    [InlineData("""{ "id": "ocxo", "version": 1, "title": "t", "appliesTo": ["OCXO"], "coverageProbability": 0.95, "contributions": [ { "name": "a", "model": "reference" } ] }""", "id")]
    [InlineData("""{ "id": "bad", "version": 0, "title": "t", "appliesTo": ["OCXO"], "coverageProbability": 0.95, "contributions": [ { "name": "a", "model": "reference" } ] }""", "version")]
    [InlineData("""{ "id": "bad", "version": 1, "title": "t", "appliesTo": ["maser"], "coverageProbability": 0.95, "contributions": [ { "name": "a", "model": "reference" } ] }""", "appliesTo[0]")]
    [InlineData("""{ "id": "bad", "version": 1, "title": "t", "appliesTo": ["OCXO"], "coverageProbability": 1.5, "contributions": [ { "name": "a", "model": "reference" } ] }""", "coverageProbability")]
    [InlineData("""{ "id": "bad", "version": 1, "title": "t", "appliesTo": ["OCXO"], "coverageProbability": 0.95, "contributions": [ { "name": "a", "model": "magic" } ] }""", "contributions[0].model")]
    [InlineData("""{ "id": "bad", "version": 1, "title": "t", "appliesTo": ["OCXO"], "coverageProbability": 0.95, "contributions": [ { "name": "a", "model": "aging" } ] }""", "holdDays")]
    [InlineData("""{ "id": "bad", "version": 1, "title": "t", "appliesTo": ["OCXO"], "coverageProbability": 0.95, "holdDays": 365, "contributions": [ { "name": "a", "model": "aging", "stage": "calibration" } ] }""", "contributions[0].stage")]
    [InlineData("""{ "id": "bad", "version": 1, "title": "t", "appliesTo": ["OCXO"], "coverageProbability": 0.95, "contributions": [ { "name": "a", "model": "type-a", "stage": "later" } ] }""", "contributions[0].stage")]
    [InlineData("""{ "id": "bad", "version": 1, "title": "t", "appliesTo": ["OCXO"], "coverageProbability": 0.95, "contributions": [ { "name": "a", "model": "warm-up", "whenShort": "line" } ] }""", "contributions[0].halfWidth")]
    [InlineData("""{ "id": "bad", "version": 1, "title": "t", "appliesTo": ["OCXO"], "coverageProbability": 0.95, "contributions": [ { "name": "a", "model": "warm-up", "whenShort": "maybe" } ] }""", "contributions[0].whenShort")]
    [InlineData("""{ "id": "bad", "version": 1, "title": "t", "appliesTo": ["OCXO"], "coverageProbability": 0.95, "contributions": [ { "name": "a", "model": "reference" }, { "name": "a", "model": "resolution" } ] }""", "contributions[1].name")]
    [InlineData("""{ "id": "bad", "version": 1, "title": "t", "appliesTo": ["OCXO"], "coverageProbability": 0.95, "contributions": [ { "name": "a", "model": "reference", "colour": 1 } ] }""", "contributions[0].colour")]
    public void AMalformedTemplateIsRefusedNamingFileAndField(string text, string field)
    {
        var ex = Assert.Throws<TemplateException>(() => TemplateCatalog.Read("bad.json", Encoding.UTF8.GetBytes(text)));
        Assert.Equal("bad.json", ex.File);
        Assert.Equal(field, ex.Field);
        Assert.Contains("bad.json", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void TheServiceDoesNotStartWithAMalformedTemplate()
    {
        string folder = System.IO.Path.Combine(System.IO.Path.GetTempPath(), "calbudget-templates-" + Guid.NewGuid().ToString("N"));
        Directory.CreateDirectory(folder);
        File.WriteAllText(System.IO.Path.Combine(folder, "broken.json"), """{ "id": "broken", "version": 1 }""");
        try
        {
            using var factory = new ServiceFactory(settings: new() { ["CalBudget:TemplatesDirectory"] = folder });
            var ex = Assert.ThrowsAny<Exception>(() => factory.CreateClient());
            Assert.Contains("broken.json: title", (ex as TemplateException ?? ex.InnerException as TemplateException)?.Message ?? ex.ToString(), StringComparison.Ordinal);
        }
        finally
        {
            Directory.Delete(folder, recursive: true);
        }
    }

    [Fact]
    public void TheShippedTemplatesAreTheFourTimebaseClasses()
    {
        var catalog = TemplateCatalog.Load(System.IO.Path.Combine(AppContext.BaseDirectory, "templates"));
        Assert.Equal(["gnss-reference", "ocxo-counter", "rubidium-reference", "tcxo-generator"], catalog.All.Select(t => t.Id));
    }
}
