using System.Globalization;
using System.Net;
using System.Text;
using System.Text.Json.Nodes;
using UglyToad.PdfPig;

namespace CalBudget.Api.Tests;

/// <summary>
/// What the calibration result may state: the CMC floor and the scope (ILAC-P14), what a run must record (warm-up, the
/// run's temperature variation), conformity on the calibration result with the lab's minimum ratio, and a recall interval
/// that starts from the calibration result, counts aging once and fits only the results since the last adjustment.
/// </summary>
public sealed class TwoResultsTests : IDisposable
{
    private static readonly DateTimeOffset Start = new(2026, 11, 30, 9, 0, 0, TimeSpan.Zero);
    private readonly ServiceFactory _factory = new();

    public void Dispose() => _factory.Dispose();

    private sealed record Made(HttpClient Tech, HttpClient Approver, long Instrument, long Reference, long Run);

    // invented records: a timebase of the kind and frequency given, a reference with a small U, one run with readings
    private async Task<Made> RunAsync(string asset, string kind = "OCXO", double nominalHz = 10e6, string spec = "", double sigma = 1e-13, string runExtra = "",
        string environment = """{ "temperatureCelsius": 23.0, "temperatureVariationKelvin": 0.2 }""", double resolution = 1e-12, bool noAging = false)
    {
        string aging = noAging ? "" : "\"agingPerDay\": 1e-11, ";
        var tech = await _factory.ClientAsync("technician", holder: "kim");
        var approver = await _factory.ClientAsync("approver", holder: "ola");
        string instrument = $$"""
        { "assetNumber": "{{asset}}", "customer": "Fenwick Marine Electronics", "manufacturer": "Quillon Instruments", "model": "FC-900",
          "timebase": { "oscillatorKind": "{{kind}}", "nominalFrequencyHz": {{nominalHz.ToString(CultureInfo.InvariantCulture)}},
            "specification": { "tolerance": { "lower": -2e-8, "upper": 2e-8, "conditions": "one year after calibration, 23 ± 5 °C" },
              {{aging}}"temperatureCoefficientPerKelvin": 1e-13, "accelerationSensitivityPerG": 1e-9, "retrace": 2e-9{{spec}} } },
          "postures": [ { "name": "standing on its feet", "up": "+z" } ] }
        """;
        long instrumentId = (await Json.PostAsync(tech, "/api/v1/instruments", instrument, HttpStatusCode.Created))["id"]!.GetValue<long>();
        string reference = $$"""
        { "identity": "RB-{{asset}}", "kind": "rubidium", "nominalFrequencyHz": 10000000,
          "calibration": { "certificateNumber": "TL-2026-0500", "issuingLab": "Regional time laboratory", "date": "2026-08-20T00:00:00Z",
                           "fractionalOffset": 0, "expandedUncertainty": 2e-13, "coverageFactor": 2 },
          "dueDate": "{{DateTimeOffset.UtcNow.AddDays(200):O}}" }
        """;
        long referenceId = (await Json.PostAsync(tech, "/api/v1/references", reference, HttpStatusCode.Created))["id"]!.GetValue<long>();
        string run = $$"""
        { "instrumentId": {{instrumentId}}, "referenceId": {{referenceId}}, "comparator": { "name": "lab counter C-3", "resolution": {{resolution.ToString("R", CultureInfo.InvariantCulture)}} },
          "gateTimeSeconds": 1, "posture": { "name": "standing on its feet" }, "environment": {{environment}},
          "condition": "as-found", "startedAt": "{{Start:O}}"{{runExtra}} }
        """;
        long runId = (await Json.PostAsync(tech, "/api/v1/calibrations", run, HttpStatusCode.Created))["id"]!.GetValue<long>();
        var random = new Random(asset.Length);
        var csv = new StringBuilder("timestamp,fractionalOffset\n");
        for (int k = 0; k < 300; k++)
        {
            double y = 3e-9 + sigma * Math.Sqrt(-2 * Math.Log(1 - random.NextDouble())) * Math.Cos(2 * Math.PI * random.NextDouble());
            csv.Append(CultureInfo.InvariantCulture, $"{Start.AddSeconds(k + 1):yyyy-MM-dd'T'HH:mm:ss'Z'},{y:R}\n");
        }

        await Json.ReadAsync(await tech.PostAsync($"/api/v1/calibrations/{runId}/readings", new StringContent(csv.ToString(), Encoding.UTF8, "text/csv")), HttpStatusCode.Created);
        return new Made(tech, approver, instrumentId, referenceId, runId);
    }

    private static async Task<long> ApprovedAsync(Made m, string template = "ocxo-counter")
    {
        long budget = (await Json.PostAsync(m.Tech, "/api/v1/budgets", $$"""{ "runId": {{m.Run}}, "templateId": "{{template}}" }""", HttpStatusCode.Created))["id"]!.GetValue<long>();
        await Json.ReadAsync(await m.Approver.PostAsync($"/api/v1/budgets/{budget}/versions/1/approve", Json.Body("{}")), HttpStatusCode.OK);
        return budget;
    }

    private static string Text(byte[] pdf)
    {
        using var document = PdfDocument.Open(pdf);
        return string.Join(" ", string.Join(" ", document.GetPages().Select(p => string.Join(" ", p.GetWords().Select(w => w.Text))))
            .Split((char[]?)null, StringSplitOptions.RemoveEmptyEntries));
    }

    [Fact]
    public async Task AResultBelowTheCmcIsStatedAtTheCmc()
    {
        // u by hand: reference 1e-13; comparator: the readings scatter by about 1e-13 < the resolution 1e-12, so 5e-13/sqrt3;
        // temperature during the run 1e-13 x 0.2 / sqrt3; Type A about 6e-15: U about 2 x 3.1e-13 = 6e-13, below the CMC 2e-12
        var m = await RunAsync("CB-0601");
        var budget = await Json.PostAsync(m.Tech, "/api/v1/budgets", $$"""{ "runId": {{m.Run}}, "templateId": "ocxo-counter" }""", HttpStatusCode.Created);
        var v = budget["latest"]!;
        double own = v["result"]!["expandedUncertainty"]!.GetValue<double>();
        Assert.InRange(own, 5e-13, 8e-13);
        var stated = v["calibrationResult"]!;
        Assert.True(stated["cmcApplied"]!.GetValue<bool>());
        Assert.True(stated["withinScope"]!.GetValue<bool>());
        Assert.Equal("CMC", stated["governs"]!.GetValue<string>());
        Assert.Equal(2e-12, stated["expandedUncertainty"]!.GetValue<double>()); // templates/scope.json, capability tf-quartz
        Assert.Equal(own, stated["budgetExpandedUncertainty"]!.GetValue<double>());
        Assert.Equal(2e-12 / v["result"]!["coverageFactor"]!.GetValue<double>(), stated["standardUncertainty"]!.GetValue<double>(), 1e-25);
        Assert.Contains("CMC tf-quartz", stated["capability"]!.GetValue<string>(), StringComparison.Ordinal);

        await Json.ReadAsync(await m.Approver.PostAsync($"/api/v1/budgets/{budget["id"]}/versions/1/approve", Json.Body("{}")), HttpStatusCode.OK);
        var cert = await Json.PostAsync(m.Tech, "/api/v1/certificates",
            $$"""{ "budgetId": {{budget["id"]}}, "version": 1, "receivedAt": "2026-11-27T00:00:00Z", "itemCondition": "no visible damage" }""", HttpStatusCode.Created);
        Assert.Equal(2e-12, cert["result"]!["expandedUncertainty"]!.GetValue<double>());
        string all = Text(await m.Tech.GetByteArrayAsync($"/api/v1/certificates/{cert["id"]}.pdf"));
        Assert.Contains("so the CMC is stated (ILAC-P14)", all, StringComparison.Ordinal);
        Assert.Contains(CalBudget.Core.Gum.StatementRounding.Round(cert["result"]!["estimate"]!.GetValue<double>(), 2e-12).ToScientific(), all, StringComparison.Ordinal);
    }

    [Fact]
    public async Task AResultNoCapabilityCoversIsStatedOutsideTheScope()
    {
        // a 32.768 kHz watch-crystal timebase: below the scope's 1 MHz
        var m = await RunAsync("CB-0602", kind: "XO", nominalHz: 32768, sigma: 3e-12);
        long budget = await ApprovedAsync(m, "tcxo-generator");
        var v = await Json.ReadAsync(await m.Tech.GetAsync($"/api/v1/budgets/{budget}/versions/1"), HttpStatusCode.OK);
        Assert.False(v["calibrationResult"]!["withinScope"]!.GetValue<bool>());
        Assert.False(v["calibrationResult"]!["cmcApplied"]!.GetValue<bool>());
        var cert = await Json.PostAsync(m.Tech, "/api/v1/certificates",
            $$"""{ "budgetId": {{budget}}, "version": 1, "receivedAt": "2026-11-27T00:00:00Z", "itemCondition": "no visible damage" }""", HttpStatusCode.Created);
        Assert.Contains("the result is outside the scope", Text(await m.Tech.GetByteArrayAsync($"/api/v1/certificates/{cert["id"]}.pdf")), StringComparison.Ordinal);
    }

    [Theory]
    [InlineData(""", "warmUpMinutes": 10""")]
    [InlineData("")]
    public async Task AShortOrUnrecordedWarmUpIsRefusedWhereTheTemplateSaysSo(string warmUp)
    {
        // the rubidium template refuses a run made before the specified warm-up of 60 minutes (or with no power-on time recorded)
        var m = await RunAsync("CB-0603" + warmUp.Length, kind: "rubidium", spec: """, "warmUpMinutes": 60""", runExtra: warmUp);
        var problem = await Json.ProblemAsync(await m.Tech.PostAsync("/api/v1/budgets", Json.Body($$"""{ "runId": {{m.Run}}, "templateId": "rubidium-reference" }""")),
            HttpStatusCode.UnprocessableEntity);
        Assert.Equal(["run.warmUpMinutes"], Json.ErrorFields(problem));
        Assert.Empty((await Json.ReadAsync(await m.Tech.GetAsync("/api/v1/budgets"), HttpStatusCode.OK))["items"]!.AsArray());
    }

    [Fact]
    public async Task AWarmUpThatWasLongEnoughAddsNothingAndTheOcxoTemplateStatesAShortOne()
    {
        var enough = await RunAsync("CB-0604", kind: "rubidium", spec: """, "warmUpMinutes": 60""", runExtra: """, "warmUpMinutes": 240""");
        var ok = await Json.PostAsync(enough.Tech, "/api/v1/budgets", $$"""{ "runId": {{enough.Run}}, "templateId": "rubidium-reference" }""", HttpStatusCode.Created);
        var line = ok["latest"]!["lines"]!.AsArray().Single(l => l!["name"]!.GetValue<string>() == "warm-up")!;
        Assert.Equal(0, line["input"]!["halfWidth"]!.GetValue<double>());
        var shortRun = await RunAsync("CB-0605", spec: """, "warmUpMinutes": 60""", runExtra: """, "warmUpMinutes": 15""");
        var stated = await Json.PostAsync(shortRun.Tech, "/api/v1/budgets", $$"""{ "runId": {{shortRun.Run}}, "templateId": "ocxo-counter" }""", HttpStatusCode.Created);
        var warm = stated["latest"]!["lines"]!.AsArray().Single(l => l!["name"]!.GetValue<string>() == "warm-up")!;
        Assert.Equal(2e-11, warm["input"]!["halfWidth"]!.GetValue<double>()); // templates/ocxo-counter.json: whenShort "line", halfWidth 2e-11
        Assert.Contains("only 15 min", warm["source"]!.GetValue<string>(), StringComparison.Ordinal);
        Assert.Equal("calibration", warm["stage"]!.GetValue<string>());
    }

    [Fact]
    public async Task ARunWithoutItsTemperatureVariationCannotGiveTheRunsTemperatureLine()
    {
        var m = await RunAsync("CB-0606", environment: """{ "temperatureCelsius": 23.0 }""");
        var problem = await Json.ProblemAsync(await m.Tech.PostAsync("/api/v1/budgets", Json.Body($$"""{ "runId": {{m.Run}}, "templateId": "ocxo-counter" }""")),
            HttpStatusCode.UnprocessableEntity);
        Assert.Equal(["run.environment.temperatureVariationKelvin"], Json.ErrorFields(problem));
    }

    [Theory]
    [InlineData(""", "warmUpMinutes": -1""", "warmUpMinutes")]
    [InlineData(""", "warmUpMinutes": "long" """, "warmUpMinutes")]
    public async Task BadRunRecordsAreRefusedNamingTheField(string extra, string field)
    {
        var tech = await _factory.ClientAsync("technician");
        long instrument = await LabRecords.InstrumentAsync(tech, "CB-0607");
        long reference = await LabRecords.ReferenceAsync(tech, "RB-0607");
        var problem = await Json.ProblemAsync(await tech.PostAsync("/api/v1/calibrations", Json.Body(LabRecords.RunBody(instrument, reference, extra: extra))), HttpStatusCode.BadRequest);
        Assert.Contains(field, Json.ErrorFields(problem));
    }

    [Fact]
    public async Task ANegativeSystematicErrorOfTheComparatorIsRefused()
    {
        var tech = await _factory.ClientAsync("technician");
        long instrument = await LabRecords.InstrumentAsync(tech, "CB-0608");
        long reference = await LabRecords.ReferenceAsync(tech, "RB-0608");
        string body = LabRecords.RunBody(instrument, reference).Replace("\"resolution\": 1e-12 }", "\"resolution\": 1e-12, \"systematicError\": -1e-12 }", StringComparison.Ordinal);
        var problem = await Json.ProblemAsync(await tech.PostAsync("/api/v1/calibrations", Json.Body(body)), HttpStatusCode.BadRequest);
        Assert.Equal(["comparator.systematicError"], Json.ErrorFields(problem));
    }

    [Fact]
    public async Task SimpleAcceptanceBelowTheMinimumRatioNeedsItsReason()
    {
        // a tolerance of +/-1e-12 against U = 2e-12 (the CMC): TUR = 2e-12 / (2 x 2e-12) = 0.5 : 1, below the default 4 : 1
        var m = await RunAsync("CB-0609");
        long budget = await ApprovedAsync(m);
        string Body(string rule) => $$"""
            { "budgetId": {{budget}}, "version": 1, "receivedAt": "2026-11-27T00:00:00Z", "itemCondition": "no visible damage",
              "tolerance": { "lower": 2.0e-9, "upper": 4.0e-9 }, "decisionRule": {{rule}} }
            """.Replace("\"lower\": 2.0e-9, \"upper\": 4.0e-9", "\"lower\": 2.999e-9, \"upper\": 3.001e-9", StringComparison.Ordinal);
        var refused = await Json.ProblemAsync(await m.Tech.PostAsync("/api/v1/certificates", Json.Body(Body("""{ "kind": "simple-acceptance" }"""))), HttpStatusCode.UnprocessableEntity);
        Assert.Equal(["decisionRule.lowRatioReason"], Json.ErrorFields(refused));
        var issued = await Json.PostAsync(m.Tech, "/api/v1/certificates",
            Body("""{ "kind": "simple-acceptance", "lowRatioReason": "the customer's own procedure asks for simple acceptance against its bench limit" }"""), HttpStatusCode.Created);
        Assert.Equal("the customer's own procedure asks for simple acceptance against its bench limit", issued["decision"]!["lowRatioReason"]!.GetValue<string>());
        // nu_eff is finite (Type A on 299 degrees of freedom): p_c comes from the t-distribution of the stated interval
        Assert.Equal("t", issued["decision"]!["governs"]!.GetValue<string>());
        Assert.Contains("the customer's own procedure", Text(await m.Tech.GetByteArrayAsync($"/api/v1/certificates/{issued["id"]}.pdf")), StringComparison.Ordinal);
    }

    [Fact]
    public async Task TheRecallIntervalStartsFromTheCalibrationResultAndCountsAgingOnce()
    {
        // three dated results (two earlier, k given) drifting 1e-11 per day: the recall comes from the calibration result's u
        // and the fit; had the prediction's U (which holds a year of aging) been used, it would come far sooner
        var m = await RunAsync("CB-0610", sigma: 3e-12);
        long budget = await ApprovedAsync(m);
        var version = await Json.ReadAsync(await m.Tech.GetAsync($"/api/v1/budgets/{budget}/versions/1"), HttpStatusCode.OK);
        string body = $$"""
            { "budgetId": {{budget}}, "version": 1, "receivedAt": "2026-11-27T00:00:00Z", "itemCondition": "no visible damage",
              "recallInterval": { "longestDays": 3650 },
              "priorResults": [ { "date": "2024-11-30T00:00:00Z", "fractionalOffset": -4.3e-9, "expandedUncertainty": 6e-10, "coverageFactor": 2 },
                                { "date": "2025-11-30T00:00:00Z", "fractionalOffset": -0.65e-9, "expandedUncertainty": 9e-10, "coverageFactor": 3 } ] }
            """;
        var cert = await Json.PostAsync(m.Tech, "/api/v1/certificates", body, HttpStatusCode.Created);
        int days = cert["recall"]!["days"]!.GetValue<int>();

        // the same computation by the Core functions, from the calibration result's own u and each result's own k
        var stated = cert["result"]!;
        var points = new[]
        {
            new CalBudget.Core.Aging.AgingPoint(0, -4.3e-9, 6e-10 / 2),
            new CalBudget.Core.Aging.AgingPoint((new DateTimeOffset(2025, 11, 30, 0, 0, 0, TimeSpan.Zero) - new DateTimeOffset(2024, 11, 30, 0, 0, 0, TimeSpan.Zero)).TotalDays, -0.65e-9, 9e-10 / 3),
            new CalBudget.Core.Aging.AgingPoint((Start - new DateTimeOffset(2024, 11, 30, 0, 0, 0, TimeSpan.Zero)).TotalDays, stated["estimate"]!.GetValue<double>(),
                stated["expandedUncertainty"]!.GetValue<double>() / stated["coverageFactor"]!.GetValue<double>()),
        };
        var fit = CalBudget.Core.Aging.AgingFit.Fit(points, CalBudget.Core.Aging.AgingModel.Linear);
        var limits = CalBudget.Core.Conformity.ToleranceLimits.Create(-2e-8, 2e-8);
        double k = stated["coverageFactor"]!.GetValue<double>();
        var once = CalBudget.Core.Conformity.RecallInterval.Find(fit, points[2].Days, points[2].FractionalOffset, stated["standardUncertainty"]!.GetValue<double>(), k, limits, 3650,
            fit.ResidualStandardDeviation);
        Assert.Equal(once.Days, days);
        var prediction = version["prediction"]!["result"]!;
        var twice = CalBudget.Core.Conformity.RecallInterval.Find(fit, points[2].Days, points[2].FractionalOffset, prediction["combinedStandardUncertainty"]!.GetValue<double>(), k, limits, 3650,
            fit.ResidualStandardDeviation);
        Assert.True(twice.Days < days, $"aging counted twice: {twice.Days} days; once: {days} days");
        // by hand: about 1e-11 per day from 3e-9 to the 2e-8 limit is about 1,700 days, less what U takes
        Assert.InRange(days, 1000, 1750);
    }

    [Fact]
    public async Task OnlyTheResultsSinceTheLastAdjustmentAreFitted()
    {
        var m = await RunAsync("CB-0611", sigma: 3e-12);
        long budget = await ApprovedAsync(m);
        string Body(bool adjustedLast) => $$"""
            { "budgetId": {{budget}}, "version": 1, "receivedAt": "2026-11-27T00:00:00Z", "itemCondition": "no visible damage",
              "recallInterval": { "longestDays": 3650 },
              "priorResults": [ { "date": "2023-11-30T00:00:00Z", "fractionalOffset": -8e-9, "expandedUncertainty": 6e-10 },
                                { "date": "2024-11-30T00:00:00Z", "fractionalOffset": -4.3e-9, "expandedUncertainty": 6e-10, "adjusted": {{(!adjustedLast).ToString().ToLowerInvariant()}} },
                                { "date": "2025-11-30T00:00:00Z", "fractionalOffset": -0.65e-9, "expandedUncertainty": 6e-10, "adjusted": {{adjustedLast.ToString().ToLowerInvariant()}} } ] }
            """;
        // adjusted two years ago: three results from there on, fitted
        var cert = await Json.PostAsync(m.Tech, "/api/v1/certificates", Body(false), HttpStatusCode.Created);
        Assert.Contains("3 points since the last adjustment", cert["recall"]!["method"]!.GetValue<string>(), StringComparison.Ordinal);
        // adjusted a year ago: that result and this one are too few for a fit, so the specified aging (1e-11 per day) bounds it
        long again = await ApprovedAsync(await RunAsync("CB-0613", sigma: 3e-12));
        var fromSpec = await Json.PostAsync(m.Tech, "/api/v1/certificates", Body(true).Replace($"\"budgetId\": {budget}", $"\"budgetId\": {again}", StringComparison.Ordinal), HttpStatusCode.Created);
        Assert.StartsWith("Predictive from the specification", fromSpec["recall"]!["method"]!.GetValue<string>(), StringComparison.Ordinal);

        // neither a fit nor a specified aging: refused naming the field
        var bare = await RunAsync("CB-0614", kind: "GNSS-disciplined", sigma: 3e-12, noAging: true);
        long bareBudget = await ApprovedAsync(bare, "gnss-reference");
        var refused = await Json.ProblemAsync(await bare.Tech.PostAsync("/api/v1/certificates", Json.Body(Body(true).Replace($"\"budgetId\": {budget}", $"\"budgetId\": {bareBudget}", StringComparison.Ordinal))),
            HttpStatusCode.UnprocessableEntity);
        Assert.Equal(["recallInterval"], Json.ErrorFields(refused));
        Assert.Contains("since the last adjustment", refused["errors"]!["recallInterval"]![0]!.GetValue<string>(), StringComparison.Ordinal);
    }

    [Fact]
    public async Task APriorResultsCoverageFactorMustBePositive()
    {
        var m = await RunAsync("CB-0612");
        long budget = await ApprovedAsync(m);
        var problem = await Json.ProblemAsync(await m.Tech.PostAsync("/api/v1/certificates", Json.Body($$"""
            { "budgetId": {{budget}}, "version": 1, "receivedAt": "2026-11-27T00:00:00Z", "itemCondition": "fine",
              "priorResults": [ { "date": "2025-11-30T00:00:00Z", "fractionalOffset": 1e-9, "expandedUncertainty": 6e-10, "coverageFactor": 0 } ] }
            """)), HttpStatusCode.BadRequest);
        Assert.Equal(["priorResults[0].coverageFactor"], Json.ErrorFields(problem));
    }
}

public sealed class LabScopeTests
{
    [Theory]
    [InlineData("{", "$")]
    [InlineData("""{ "capabilities": 3 }""", "capabilities")]
    [InlineData("""{ "capabilities": [ { "id": "x", "quantity": "q", "oscillatorKinds": ["maser"], "nominalFrequencyHz": { "min": 1, "max": 2 }, "fractionalOffset": { "min": -1, "max": 1 }, "expandedUncertainty": 1e-12, "coverageFactor": 2, "conditions": "c" } ] }""", "capabilities[0].oscillatorKinds[0]")]
    [InlineData("""{ "capabilities": [ { "id": "x", "quantity": "q", "oscillatorKinds": ["OCXO"], "nominalFrequencyHz": { "min": 2, "max": 1 }, "fractionalOffset": { "min": -1, "max": 1 }, "expandedUncertainty": 1e-12, "coverageFactor": 2, "conditions": "c" } ] }""", "capabilities[0].nominalFrequencyHz")]
    [InlineData("""{ "capabilities": [ { "id": "x", "quantity": "q", "oscillatorKinds": ["OCXO"], "nominalFrequencyHz": { "min": 1, "max": 2 }, "fractionalOffset": { "min": -1, "max": 1 }, "expandedUncertainty": 0, "coverageFactor": 2, "conditions": "c" } ] }""", "capabilities[0].expandedUncertainty")]
    [InlineData("""{ "capabilities": [ { "quantity": "q", "oscillatorKinds": ["OCXO"], "nominalFrequencyHz": { "min": 1, "max": 2 }, "fractionalOffset": { "min": -1, "max": 1 }, "expandedUncertainty": 1e-12, "coverageFactor": 2, "conditions": "c" } ] }""", "capabilities[0].id")]
    public void AMalformedScopeIsRefusedNamingTheField(string text, string field)
    {
        var ex = Assert.Throws<CalBudget.Api.Budgets.TemplateException>(() => CalBudget.Api.Budgets.LabScope.Read(Encoding.UTF8.GetBytes(text)));
        Assert.Equal("scope.json", ex.File);
        Assert.Equal(field, ex.Field);
    }

    [Fact]
    public void TheShippedScopeCoversTheQuartzAndAtomicClassesOnly()
    {
        var scope = CalBudget.Api.Budgets.LabScope.Load(System.IO.Path.Combine(AppContext.BaseDirectory, "templates"));
        Assert.Equal("tf-quartz", scope.Covering("OCXO", 10e6, 3e-9)!.Id);
        Assert.Equal("tf-atomic", scope.Covering("rubidium", 10e6, 1e-11)!.Id);
        Assert.Null(scope.Covering("XO", 32768, 0));          // below 1 MHz
        Assert.Null(scope.Covering("rubidium", 10e6, 1e-7));   // an offset beyond the atomic range
        Assert.Null(scope.Covering("other", 10e6, 0));
    }
}
