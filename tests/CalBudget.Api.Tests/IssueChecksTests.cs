using System.Globalization;
using System.Net;
using System.Text;
using UglyToad.PdfPig;

namespace CalBudget.Api.Tests;

/// <summary>
/// What must hold at the moment of issue, each refusal naming the field: the dates in order and none in the future, the
/// reference usable on the run's date, one certificate in force per budget version, an as-left result of the same
/// instrument made after the as-found one, and no as-found-only certificate when the records hold an as-left run.
/// </summary>
public sealed class IssueChecksTests : IDisposable
{
    private readonly ServiceFactory _factory = new();

    public void Dispose() => _factory.Dispose();

    private sealed record Lab(HttpClient Tech, HttpClient Approver, long Instrument, long Reference);

    // invented records: an OCXO counter and a reference due in 200 days
    private async Task<Lab> LabAsync(string asset)
    {
        var tech = await _factory.ClientAsync("technician", holder: "kim");
        var approver = await _factory.ClientAsync("approver", holder: "ola");
        long instrument = await InstrumentAsync(tech, asset);
        string reference = $$"""
        { "identity": "RB-{{asset}}", "kind": "rubidium", "nominalFrequencyHz": 10000000,
          "calibration": { "certificateNumber": "TL-2026-0600", "issuingLab": "Regional time laboratory", "date": "2026-06-01T00:00:00Z",
                           "fractionalOffset": 0, "expandedUncertainty": 2e-12, "coverageFactor": 2 },
          "dueDate": "{{DateTimeOffset.UtcNow.AddDays(200):O}}" }
        """;
        long referenceId = (await Json.PostAsync(tech, "/api/v1/references", reference, HttpStatusCode.Created))["id"]!.GetValue<long>();
        return new Lab(tech, approver, instrument, referenceId);
    }

    private static async Task<long> InstrumentAsync(HttpClient client, string asset)
    {
        string body = $$"""
        { "assetNumber": "{{asset}}", "customer": "Fenwick Marine Electronics", "manufacturer": "Quillon Instruments", "model": "FC-900",
          "timebase": { "oscillatorKind": "OCXO", "nominalFrequencyHz": 10000000,
            "specification": { "agingPerDay": 1e-11, "temperatureCoefficientPerKelvin": 1e-11, "accelerationSensitivityPerG": 1e-9, "retrace": 2e-9 } },
          "postures": [ { "name": "standing on its feet", "up": "+z" } ] }
        """;
        return (await Json.PostAsync(client, "/api/v1/instruments", body, HttpStatusCode.Created))["id"]!.GetValue<long>();
    }

    // a run with readings and its approved budget; the budget's id
    private static async Task<long> ApprovedRunAsync(Lab lab, long instrument, string condition, DateTimeOffset start, double offset = 2e-9)
    {
        string run = LabRecords.RunBody(instrument, lab.Reference, condition: condition)
            .Replace("2026-11-30T09:00:00Z", start.ToString("yyyy-MM-dd'T'HH:mm:ss'Z'", CultureInfo.InvariantCulture), StringComparison.Ordinal)
            .Replace("\"endedAt\": \"2026-11-30T09:10:00Z\",", "", StringComparison.Ordinal);
        long runId = (await Json.PostAsync(lab.Tech, "/api/v1/calibrations", run, HttpStatusCode.Created))["id"]!.GetValue<long>();
        var csv = new StringBuilder("timestamp,fractionalOffset\n");
        var random = new Random(condition.Length);
        for (int k = 0; k < 200; k++)
        {
            csv.Append(CultureInfo.InvariantCulture, $"{start.AddSeconds(k + 1):yyyy-MM-dd'T'HH:mm:ss'Z'},{offset + 3e-12 * (random.NextDouble() - 0.5):R}\n");
        }

        await Json.ReadAsync(await lab.Tech.PostAsync($"/api/v1/calibrations/{runId}/readings", new StringContent(csv.ToString(), Encoding.UTF8, "text/csv")), HttpStatusCode.Created);
        long budget = (await Json.PostAsync(lab.Tech, "/api/v1/budgets", $$"""{ "runId": {{runId}}, "templateId": "ocxo-counter" }""", HttpStatusCode.Created))["id"]!.GetValue<long>();
        await Json.ReadAsync(await lab.Approver.PostAsync($"/api/v1/budgets/{budget}/versions/1/approve", Json.Body("{}")), HttpStatusCode.OK);
        return budget;
    }

    private static readonly DateTimeOffset Found = new(2026, 11, 30, 9, 0, 0, TimeSpan.Zero);

    private static string Body(long budget, string received = "2026-11-27T14:00:00Z", string extra = "") => $$"""
        { "budgetId": {{budget}}, "version": 1, "receivedAt": "{{received}}", "itemCondition": "no visible damage"{{extra}} }
        """;

    [Fact]
    public async Task TheDatesMustBeInOrderAndNoneInTheFuture()
    {
        var lab = await LabAsync("CB-0701");
        long budget = await ApprovedRunAsync(lab, lab.Instrument, "as-found", Found);
        var future = await Json.ProblemAsync(await lab.Tech.PostAsync("/api/v1/certificates", Json.Body(Body(budget, DateTimeOffset.UtcNow.AddDays(3).ToString("O")))), HttpStatusCode.UnprocessableEntity);
        Assert.Equal(["receivedAt"], Json.ErrorFields(future));
        var late = await Json.ProblemAsync(await lab.Tech.PostAsync("/api/v1/certificates", Json.Body(Body(budget, "2026-11-30T12:00:00Z"))), HttpStatusCode.UnprocessableEntity);
        Assert.Equal(["receivedAt"], Json.ErrorFields(late));
        Assert.Contains("after its calibration started", late["errors"]!["receivedAt"]![0]!.GetValue<string>(), StringComparison.Ordinal);
        long ahead = await ApprovedRunAsync(lab, await InstrumentAsync(lab.Tech, "CB-0702"), "as-found", DateTimeOffset.UtcNow.AddDays(2));
        var runAhead = await Json.ProblemAsync(await lab.Tech.PostAsync("/api/v1/certificates", Json.Body(Body(ahead))), HttpStatusCode.UnprocessableEntity);
        Assert.Equal(["budgetId"], Json.ErrorFields(runAhead));
        Assert.Empty((await Json.ReadAsync(await lab.Tech.GetAsync("/api/v1/certificates"), HttpStatusCode.OK))["items"]!.AsArray());
    }

    [Fact]
    public async Task ABudgetVersionHasOneCertificateInForceAndAnAmendmentReplacesIt()
    {
        var lab = await LabAsync("CB-0703");
        long budget = await ApprovedRunAsync(lab, lab.Instrument, "as-found", Found);
        var first = await Json.PostAsync(lab.Tech, "/api/v1/certificates", Body(budget), HttpStatusCode.Created);
        var second = await Json.ProblemAsync(await lab.Tech.PostAsync("/api/v1/certificates", Json.Body(Body(budget))), HttpStatusCode.Conflict);
        Assert.Equal(["version"], Json.ErrorFields(second));
        Assert.Contains(first["number"]!.GetValue<string>(), second["title"]!.GetValue<string>(), StringComparison.Ordinal);
        var amended = await Json.PostAsync(lab.Approver, $"/api/v1/certificates/{first["id"]}/amend", """{ "note": "The condition on receipt was corrected." }""", HttpStatusCode.Created);
        Assert.Equal(first["id"]!.GetValue<long>(), amended["replaces"]!.GetValue<long>());
    }

    [Fact]
    public async Task AReferenceOverdueOnTheRunsDateIsRefused()
    {
        var lab = await LabAsync("CB-0704");
        long budget = await ApprovedRunAsync(lab, lab.Instrument, "as-found", Found);
        // the reference's due date corrected afterwards to before the run: the run was made with an overdue reference
        var reference = await Json.ReadAsync(await lab.Tech.GetAsync($"/api/v1/references/{lab.Reference}"), HttpStatusCode.OK);
        string body = $$"""
        { "identity": "RB-CB-0704", "kind": "rubidium", "nominalFrequencyHz": 10000000,
          "calibration": { "certificateNumber": "TL-2026-0600", "issuingLab": "Regional time laboratory", "date": "2026-06-01T00:00:00Z",
                           "fractionalOffset": 0, "expandedUncertainty": 2e-12, "coverageFactor": 2 },
          "dueDate": "2026-11-15T00:00:00Z" }
        """;
        var put = new HttpRequestMessage(HttpMethod.Put, $"/api/v1/references/{lab.Reference}") { Content = Json.Body(body) };
        put.Headers.TryAddWithoutValidation("If-Match", $"\"{reference["version"]}\"");
        Assert.True((await lab.Tech.SendAsync(put)).IsSuccessStatusCode);
        var refused = await Json.ProblemAsync(await lab.Tech.PostAsync("/api/v1/certificates", Json.Body(Body(budget))), HttpStatusCode.Conflict);
        Assert.Equal(["budgetId"], Json.ErrorFields(refused));
        Assert.Contains("fell due on 2026-11-15", refused["detail"]!.GetValue<string>(), StringComparison.Ordinal);
    }

    [Fact]
    public async Task AnAdjustedItemNeedsTheAsLeftResultOfItsOwnLaterRun()
    {
        var lab = await LabAsync("CB-0705");
        long found = await ApprovedRunAsync(lab, lab.Instrument, "as-found", Found);
        // another instrument's as-left run, and this instrument's as-left run before the as-found one, are both refused
        long stranger = await ApprovedRunAsync(lab, await InstrumentAsync(lab.Tech, "CB-0706"), "as-left", Found.AddHours(2), 4e-11);
        string Adjusted(long left) => Body(found, extra: $$""", "adjusted": true, "asLeftBudgetId": {{left}}, "asLeftVersion": 1""");
        var other = await Json.ProblemAsync(await lab.Tech.PostAsync("/api/v1/certificates", Json.Body(Adjusted(stranger))), HttpStatusCode.UnprocessableEntity);
        Assert.Equal(["asLeftBudgetId"], Json.ErrorFields(other));
        Assert.Contains("not of CB-0705", other["errors"]!["asLeftBudgetId"]![0]!.GetValue<string>(), StringComparison.Ordinal);
        long before = await ApprovedRunAsync(lab, lab.Instrument, "as-left", Found.AddHours(-30), 4e-11);
        var early = await Json.ProblemAsync(await lab.Tech.PostAsync("/api/v1/certificates", Json.Body(Adjusted(before))), HttpStatusCode.UnprocessableEntity);
        Assert.Equal(["asLeftBudgetId"], Json.ErrorFields(early));

        // the as-left run of this calibration: an as-found-only certificate is refused, the adjusted one is issued
        long left = await ApprovedRunAsync(lab, lab.Instrument, "as-left", Found.AddHours(2), 4e-11);
        var foundOnly = await Json.ProblemAsync(await lab.Tech.PostAsync("/api/v1/certificates", Json.Body(Body(found))), HttpStatusCode.Conflict);
        Assert.Equal(["adjusted"], Json.ErrorFields(foundOnly));
        var cert = await Json.PostAsync(lab.Tech, "/api/v1/certificates", Adjusted(left), HttpStatusCode.Created);
        Assert.Equal(4e-11, cert["result"]!["estimate"]!.GetValue<double>(), 1e-12);
        using var pdf = PdfDocument.Open(await lab.Tech.GetByteArrayAsync($"/api/v1/certificates/{cert["id"]}.pdf"));
        string text = string.Join(" ", pdf.GetPages().SelectMany(p => p.GetWords()).Select(w => w.Text));
        Assert.Contains("before adjustment", text, StringComparison.Ordinal);
        Assert.Contains("after adjustment", text, StringComparison.Ordinal);
        Assert.DoesNotContain("no adjustment was made", text, StringComparison.Ordinal);
    }
}

public sealed class NamedApproverTests : IDisposable
{
    private readonly ServiceFactory _factory = new();

    public void Dispose() => _factory.Dispose();

    [Fact]
    public async Task AKeyWithoutANamedHolderCannotApprove()
    {
        var tech = await _factory.ClientAsync("technician", holder: "kim");
        long run = await LabRecords.RunWithReadingsAsync(tech, "CB-0710");
        long budget = (await Json.PostAsync(tech, "/api/v1/budgets", $$"""{ "runId": {{run}}, "templateId": "ocxo-counter" }""", HttpStatusCode.Created))["id"]!.GetValue<long>();
        var stranger = await _factory.ClientAsync("approver"); // no holder: its name would stand in for a person nobody can identify
        var refused = await Json.ProblemAsync(await stranger.PostAsync($"/api/v1/budgets/{budget}/versions/1/approve", Json.Body("{}")), HttpStatusCode.Forbidden);
        Assert.Contains("named holder", refused["title"]!.GetValue<string>(), StringComparison.Ordinal);
        var named = await _factory.ClientAsync("approver", holder: "ola");
        await Json.PostAsync(named, $"/api/v1/budgets/{budget}/versions/1/approve", "{}", HttpStatusCode.OK);
        var cert = await Json.PostAsync(tech, "/api/v1/certificates",
            $$"""{ "budgetId": {{budget}}, "version": 1, "receivedAt": "2026-11-27T00:00:00Z", "itemCondition": "no visible damage" }""", HttpStatusCode.Created);
        await Json.ProblemAsync(await stranger.PostAsync($"/api/v1/certificates/{cert["id"]}/withdraw", Json.Body("""{ "reason": "r" }""")), HttpStatusCode.Forbidden);
        await Json.ProblemAsync(await stranger.PostAsync($"/api/v1/certificates/{cert["id"]}/amend", Json.Body("""{ "note": "n" }""")), HttpStatusCode.Forbidden);
    }
}
