using System.Diagnostics;
using System.Globalization;
using System.Net;
using System.Security.Cryptography;
using System.Text;
using System.Text.Json;
using System.Text.Json.Nodes;
using CalBudget.Api.Certificates;
using CalBudget.Reports;
using CalBudget.Reports.Fonts;
using Microsoft.AspNetCore.Http.Json;
using Microsoft.Data.Sqlite;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Options;
using UglyToad.PdfPig;

namespace CalBudget.Api.Tests;

/// <summary>
/// Certificates end to end: issued from an approved budget only, every ISO/IEC 17025:2017 7.8 item read back from the PDF
/// with PdfPig, the stored PDF served byte for byte, regeneration from the snapshot, amendment and withdrawal.
/// </summary>
public sealed class CertificatesTests : IDisposable
{
    private readonly ServiceFactory _factory = new();

    public void Dispose() => _factory.Dispose();

    private sealed record Setup(HttpClient Tech, HttpClient Approver, long Instrument, long Budget);

    // An invented OCXO counter with a tolerance and three postures, a run of 300 white-FM readings, its budget approved by a second person.
    private async Task<Setup> ApprovedBudgetAsync(string asset = "CB-0301", string tolerance = """{ "lower": -2e-8, "upper": 2e-8, "conditions": "one year" }""",
        string kind = "OCXO", string template = "ocxo-counter", ServiceFactory? factory = null)
    {
        var tech = await (factory ?? _factory).ClientAsync("technician", holder: "kim");
        var approver = await (factory ?? _factory).ClientAsync("approver", holder: "ola");
        string instrumentBody = $$"""
        { "assetNumber": "{{asset}}", "customer": "Northfield Avionics", "manufacturer": "Quillon Instruments", "model": "FC-900", "serialNumber": "Q-7311",
          "description": "FC-900 universal counter",
          "timebase": { "oscillatorKind": "{{kind}}", "nominalFrequencyHz": 10000000,
            "specification": { "tolerance": {{tolerance}}, "agingPerDay": 1e-11, "temperatureCoefficientPerKelvin": 1e-10, "accelerationSensitivityPerG": 1e-9, "retrace": 2e-9 } },
          "postures": [ { "name": "standing on its feet", "up": "+z" }, { "name": "on its left side", "up": "-x" }, { "name": "upside down", "up": "-z" } ] }
        """;
        long instrument = (await Json.PostAsync(tech, "/api/v1/instruments", instrumentBody, HttpStatusCode.Created))["id"]!.GetValue<long>();
        string referenceBody = $$"""
        { "identity": "RB-{{asset}}", "kind": "rubidium", "nominalFrequencyHz": 10000000,
          "calibration": { "certificateNumber": "TL-2026-0417", "issuingLab": "Regional time laboratory", "date": "2026-08-20T00:00:00Z",
                           "fractionalOffset": 1.5e-12, "expandedUncertainty": 2e-12, "coverageFactor": 2, "driftPerDay": 1e-14, "driftUncertaintyPerDay": 2e-15 },
          "dueDate": "{{DateTimeOffset.UtcNow.AddDays(200):O}}" }
        """;
        long reference = (await Json.PostAsync(tech, "/api/v1/references", referenceBody, HttpStatusCode.Created))["id"]!.GetValue<long>();
        long run = (await Json.PostAsync(tech, "/api/v1/calibrations", LabRecords.RunBody(instrument, reference), HttpStatusCode.Created))["id"]!.GetValue<long>();
        var random = new Random(17);
        var csv = new StringBuilder("timestamp,fractionalOffset\n");
        var start = new DateTimeOffset(2026, 11, 30, 9, 0, 0, TimeSpan.Zero);
        for (int k = 0; k < 300; k++)
        {
            double y = 3e-9 + 4e-12 * Math.Sqrt(-2 * Math.Log(1 - random.NextDouble())) * Math.Cos(2 * Math.PI * random.NextDouble());
            csv.Append(CultureInfo.InvariantCulture, $"{start.AddSeconds(k + 1):yyyy-MM-dd'T'HH:mm:ss'Z'},{y:R}\n");
        }

        await Json.ReadAsync(await tech.PostAsync($"/api/v1/calibrations/{run}/readings", new StringContent(csv.ToString(), Encoding.UTF8, "text/csv")), HttpStatusCode.Created);
        long budget = (await Json.PostAsync(tech, "/api/v1/budgets", $$"""{ "runId": {{run}}, "templateId": "{{template}}", "posturePolicy": { "kind": "as-calibrated" }, "monteCarlo": { "trials": 50000, "seed": 5 } }""",
            HttpStatusCode.Created))["id"]!.GetValue<long>();
        await Json.ReadAsync(await approver.PostAsync($"/api/v1/budgets/{budget}/versions/1/approve", Json.Body("{}")), HttpStatusCode.OK);
        return new Setup(tech, approver, instrument, budget);
    }

    private static string IssueBody(long budget, string extra = "") => $$"""
        { "budgetId": {{budget}}, "version": 1, "receivedAt": "2026-11-27T14:00:00Z", "itemCondition": "received in its transit case, no visible damage",
          "customerAddress": ["14 Ropewalk Lane", "Northfield NF2 8DX"], "decisionRule": { "kind": "non-binary" }, "recallInterval": { "longestDays": 730 },
          "priorResults": [ { "date": "2024-11-25T00:00:00Z", "fractionalOffset": -1.2e-8, "expandedUncertainty": 6e-10 },
                            { "date": "2025-11-24T00:00:00Z", "fractionalOffset": -4.5e-9, "expandedUncertainty": 6e-10 } ]{{extra}} }
        """;

    private static string[] Pages(byte[] pdf)
    {
        using var document = PdfDocument.Open(pdf);
        return document.GetPages().Select(p => string.Join(" ", p.GetWords().Select(w => w.Text))).ToArray();
    }

    private static string Squash(string s) => string.Join(" ", s.Split((char[]?)null, StringSplitOptions.RemoveEmptyEntries));

    [Fact]
    public async Task TheIssuedPdfStatesEveryRequiredItemOnNumberedPages()
    {
        var s = await ApprovedBudgetAsync();
        var cert = await Json.PostAsync(s.Tech, "/api/v1/certificates", IssueBody(s.Budget), HttpStatusCode.Created);
        string number = cert["number"]!.GetValue<string>();
        Assert.Matches(@"^HTF-\d{4}-0001$", number);
        Assert.Equal("issued", cert["state"]!.GetValue<string>());
        var response = await s.Tech.GetAsync($"/api/v1/certificates/{cert["id"]}.pdf");
        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        Assert.Equal("application/pdf", response.Content.Headers.ContentType!.MediaType);
        byte[] pdf = await response.Content.ReadAsByteArrayAsync();
        Assert.Equal(cert["pdfSha256"]!.GetValue<string>(), Convert.ToHexStringLower(SHA256.HashData(pdf)));

        var pages = Pages(pdf);
        Assert.True(pages.Length >= 2, $"{pages.Length} page(s)");
        for (int i = 0; i < pages.Length; i++)
        {
            Assert.Contains($"page {i + 1} of {pages.Length}", Squash(pages[i]), StringComparison.Ordinal);
            Assert.Contains(number, pages[i], StringComparison.Ordinal);
            Assert.Contains("Harrowgate Time and Frequency Laboratory", pages[i], StringComparison.Ordinal);
        }

        string all = Squash(string.Join(" ", pages));
        string[] required =
        [
            "Certificate of calibration", "Unit 4, Kestrel Park", "Millbridge MB7 2QT",                       // title, lab and address
            "Northfield Avionics, 14 Ropewalk Lane", "asset CB-0301", "serial Q-7311", "Quillon Instruments FC-900", // customer, item
            "received in its transit case, no visible damage",                                            // condition
            "Date of receipt 2026-11-27", "Date of calibration 2026-11-30", "Date of issue",               // dates
            "Method", "compared with the laboratory's reference standard",                                 // method
            "Reference standard RB-CB-0301", "certificate TL-2026-0417", "traceability to national standards", // traceability
            "ambient temperature 23.1 °C ± 0.4 K", "relative humidity 41 %",                               // environment
            "Calibrated standing on its feet: up vector (0, 0, 1)", "gravity along (0, 0, -1)",             // the posture in words and as a vector
            "on its left side", "upside down", "within ± 2.0 × 10⁻⁹",                                        // the other postures and their shift
            "as found", "as left", "no adjustment was made",                                               // results as found and as left
            "coverage factor k = 2.00", "coverage probability of approximately 95.45 %",                    // U with k and p in words
            "reference standard", "comparator", "repeatability", "temperature during the run",             // the budget table (calibration lines)
            "In-use prediction (not the uncertainty of the result)", "until 2027-11-30",                  // the prediction, labelled, with its assumptions
            "non-binary statement of ILAC-G8:09/2019", "Outcome:", "Probability of conformity",            // the decision rule and the outcome
            "longest interval of 730 days", "Predictive",                                                   // the recall interval, asked for (within tolerance for the longest interval)
            "Overlapping Allan deviation of the run", "History of the instrument's results",               // the two plots
            "relates only to the item calibrated",                                                          // the caution
            "Authorised by ola, approver",                                                                  // the approver's name and role
        ];
        var version = await Json.ReadAsync(await s.Tech.GetAsync($"/api/v1/budgets/{s.Budget}/versions/1"), HttpStatusCode.OK);
        Assert.Contains($"Authorised by ola, approver (key {version["approvedBy"]}), who approved the uncertainty budget on {version["approvedAt"]!.GetValue<DateTimeOffset>():yyyy-MM-dd HH:mm} UTC", all, StringComparison.Ordinal);
        Assert.Contains("Budget prepared by kim.", all, StringComparison.Ordinal);
        foreach (string item in required)
        {
            Assert.True(all.Contains(item, StringComparison.Ordinal), $"missing: {item}");
        }

        Assert.DoesNotContain("Amendment", all, StringComparison.Ordinal);
        // U to two significant digits in the statement: "(v ± U) × 10^e" with U's digits as JCGM 100 7.2.6 rounds them
        var u = cert["result"]!["expandedUncertainty"]!.GetValue<double>();
        string statement = CalBudget.Core.Gum.StatementRounding.Round(cert["result"]!["estimate"]!.GetValue<double>(), u).ToScientific();
        Assert.Contains(statement, all, StringComparison.Ordinal);
        using var document = PdfDocument.Open(pdf);
        Assert.True(document.GetPages().Sum(p => p.GetImages().Count()) >= 2, "two plots");
    }

    [Theory]
    [InlineData("OCXO", "ocxo-counter", "CB-0311")]
    [InlineData("TCXO", "tcxo-generator", "CB-0312")]
    [InlineData("XO", "tcxo-generator", "CB-0313")]
    [InlineData("rubidium", "rubidium-reference", "CB-0314")]
    [InlineData("GNSS-disciplined", "gnss-reference", "CB-0315")]
    public async Task EveryTimebaseClassGetsACertificateThatDownloadsAndVerifies(string kind, string template, string asset)
    {
        var s = await ApprovedBudgetAsync(asset, """{ "lower": -1e-6, "upper": 1e-6 }""", kind, template);
        var cert = await Json.PostAsync(s.Tech, "/api/v1/certificates", IssueBody(s.Budget), HttpStatusCode.Created);
        byte[] pdf = await s.Tech.GetByteArrayAsync($"/api/v1/certificates/{cert["id"]}.pdf");
        Assert.Equal(cert["pdfSha256"]!.GetValue<string>(), Convert.ToHexStringLower(SHA256.HashData(pdf)));
        string text = Squash(string.Join(" ", Pages(pdf)));
        Assert.Contains($"asset {asset}", text, StringComparison.Ordinal);
        Assert.Contains($"timebase ({kind},", text, StringComparison.Ordinal);
        Assert.Contains("Calibrated standing on its feet: up vector (0, 0, 1)", text, StringComparison.Ordinal);
        Assert.Equal("pass", cert["decision"]!["outcome"]!.GetValue<string>());
    }

    [Fact]
    public async Task TheDecisionAndRecallAreStoredWithTheirNumbers()
    {
        var s = await ApprovedBudgetAsync();
        var cert = await Json.PostAsync(s.Tech, "/api/v1/certificates", IssueBody(s.Budget), HttpStatusCode.Created);
        var result = cert["result"]!;
        double y = result["estimate"]!.GetValue<double>(), uc = result["standardUncertainty"]!.GetValue<double>(), bigU = result["expandedUncertainty"]!.GetValue<double>();
        var d = cert["decision"]!;
        // JCGM 106 eq. for p_c with T = +/-2e-8, computed here with MathNet's normal CDF as the reference library.
        double pc = MathNet.Numerics.Distributions.Normal.CDF(0, 1, (2e-8 - y) / uc) - MathNet.Numerics.Distributions.Normal.CDF(0, 1, (-2e-8 - y) / uc);
        Assert.Equal(pc, d["probabilityOfConformity"]!.GetValue<double>(), 12);
        Assert.Equal(4e-8 / (2 * bigU), d["testUncertaintyRatio"]!.GetValue<double>(), 9);
        string expected = Math.Abs(y) <= 2e-8 - bigU ? "pass" : Math.Abs(y) <= 2e-8 ? "conditional pass" : Math.Abs(y) - bigU <= 2e-8 ? "conditional fail" : "fail";
        Assert.Equal(expected, d["outcome"]!.GetValue<string>());
        Assert.InRange(d["monteCarloProbabilityOfConformity"]!.GetValue<double>(), pc - 0.02, pc + 0.02);
        Assert.NotNull(cert["recall"]!["method"]);
    }

    [Fact]
    public async Task ADraftIsNotCertifiedAndBadSettingsAreNamed()
    {
        var s = await ApprovedBudgetAsync();
        var revise = new HttpRequestMessage(HttpMethod.Post, $"/api/v1/budgets/{s.Budget}/versions") { Content = Json.Body("""{ "reason": "used in any orientation", "posturePolicy": { "kind": "any" } }""") };
        revise.Headers.TryAddWithoutValidation("If-Match", "\"1\"");
        await Json.ReadAsync(await s.Tech.SendAsync(revise), HttpStatusCode.Created);
        var refused = await Json.ProblemAsync(await s.Tech.PostAsync("/api/v1/certificates", Json.Body(IssueBody(s.Budget).Replace("\"version\": 1", "\"version\": 2", StringComparison.Ordinal))), HttpStatusCode.Conflict);
        Assert.Equal(["version"], Json.ErrorFields(refused));

        var reversed = await Json.ProblemAsync(await s.Tech.PostAsync("/api/v1/certificates", Json.Body(IssueBody(s.Budget, """, "tolerance": { "lower": 1e-8, "upper": -1e-8 }"""))), HttpStatusCode.BadRequest);
        Assert.Equal(["tolerance.lower"], Json.ErrorFields(reversed));
        var unknown = await Json.ProblemAsync(await s.Tech.PostAsync("/api/v1/certificates", Json.Body(IssueBody(999))), HttpStatusCode.UnprocessableEntity);
        Assert.Equal(["budgetId"], Json.ErrorFields(unknown));
        var missing = await Json.ProblemAsync(await s.Tech.PostAsync("/api/v1/certificates", Json.Body($$"""{ "budgetId": {{s.Budget}}, "version": 1 }""")), HttpStatusCode.BadRequest);
        Assert.Equal(["itemCondition", "receivedAt"], Json.ErrorFields(missing).Order(StringComparer.Ordinal));
        var rule = await Json.ProblemAsync(await s.Tech.PostAsync("/api/v1/certificates", Json.Body(IssueBody(s.Budget).Replace("non-binary", "lenient", StringComparison.Ordinal))), HttpStatusCode.BadRequest);
        Assert.Equal(["decisionRule.kind"], Json.ErrorFields(rule));

        var t = await ApprovedBudgetAsync("CB-0303", "null");
        var noTolerance = await Json.ProblemAsync(await t.Tech.PostAsync("/api/v1/certificates", Json.Body(IssueBody(t.Budget))), HttpStatusCode.BadRequest);
        Assert.Equal(["tolerance"], Json.ErrorFields(noTolerance));
        var list = await Json.ReadAsync(await s.Tech.GetAsync("/api/v1/certificates"), HttpStatusCode.OK);
        Assert.Empty(list["items"]!.AsArray()); // nothing refused left anything behind
    }

    [Fact]
    public async Task AnAmendmentNamesAndReplacesTheOldCertificateWhichStaysAsIssued()
    {
        var s = await ApprovedBudgetAsync();
        var first = await Json.PostAsync(s.Tech, "/api/v1/certificates", IssueBody(s.Budget), HttpStatusCode.Created);
        long firstId = first["id"]!.GetValue<long>();
        byte[] firstPdf = await s.Tech.GetByteArrayAsync($"/api/v1/certificates/{firstId}.pdf");
        Assert.Equal(HttpStatusCode.Forbidden, (await s.Tech.PostAsync($"/api/v1/certificates/{firstId}/amend", Json.Body("""{ "note": "x" }"""))).StatusCode);
        var noNote = await Json.ProblemAsync(await s.Approver.PostAsync($"/api/v1/certificates/{firstId}/amend", Json.Body("{}")), HttpStatusCode.BadRequest);
        Assert.Equal(["note"], Json.ErrorFields(noNote));

        var second = await Json.PostAsync(s.Approver, $"/api/v1/certificates/{firstId}/amend",
            """{ "note": "The customer's address was corrected.", "changes": { "customerAddress": ["16 Ropewalk Lane", "Northfield NF2 8DX"] } }""", HttpStatusCode.Created);
        Assert.Equal(firstId, second["replaces"]!.GetValue<long>());
        Assert.NotEqual(first["number"]!.GetValue<string>(), second["number"]!.GetValue<string>());
        string text = Squash(string.Join(" ", Pages(await s.Tech.GetByteArrayAsync($"/api/v1/certificates/{second["id"]}.pdf"))));
        Assert.Contains($"replaces certificate {first["number"]}", text, StringComparison.Ordinal);
        Assert.Contains("The customer's address was corrected.", text, StringComparison.Ordinal);
        Assert.Contains("16 Ropewalk Lane", text, StringComparison.Ordinal);

        var old = await Json.ReadAsync(await s.Tech.GetAsync($"/api/v1/certificates/{firstId}"), HttpStatusCode.OK);
        Assert.Equal("amended", old["state"]!.GetValue<string>());
        Assert.Equal(second["id"]!.GetValue<long>(), old["replacedBy"]!.GetValue<long>());
        Assert.Equal(firstPdf, await s.Tech.GetByteArrayAsync($"/api/v1/certificates/{firstId}.pdf")); // byte-identical, forever
        await Json.ProblemAsync(await s.Approver.PostAsync($"/api/v1/certificates/{firstId}/amend", Json.Body("""{ "note": "again" }""")), HttpStatusCode.Conflict);

        long secondId = second["id"]!.GetValue<long>();
        var noReason = await Json.ProblemAsync(await s.Approver.PostAsync($"/api/v1/certificates/{secondId}/withdraw", Json.Body("{}")), HttpStatusCode.BadRequest);
        Assert.Equal(["reason"], Json.ErrorFields(noReason));
        var withdrawn = await Json.ReadAsync(await s.Approver.PostAsync($"/api/v1/certificates/{secondId}/withdraw", Json.Body("""{ "reason": "the item was found to be damaged in transit" }""")), HttpStatusCode.OK);
        Assert.Equal("withdrawn", withdrawn["state"]!.GetValue<string>());
        var amendWithdrawn = await Json.ProblemAsync(await s.Approver.PostAsync($"/api/v1/certificates/{secondId}/amend", Json.Body("""{ "note": "x" }""")), HttpStatusCode.Conflict);
        Assert.Contains("withdrawn", amendWithdrawn["title"]!.GetValue<string>(), StringComparison.Ordinal);
        var byInstrument = await Json.ReadAsync(await s.Tech.GetAsync($"/api/v1/certificates?instrumentId={s.Instrument}"), HttpStatusCode.OK);
        Assert.Equal(2, byInstrument["items"]!.AsArray().Count);
        var byCustomer = await Json.ReadAsync(await s.Tech.GetAsync("/api/v1/certificates?customer=Harbour%20Test%20House"), HttpStatusCode.OK);
        Assert.Empty(byCustomer["items"]!.AsArray());

        var auditor = await _factory.ClientAsync("auditor");
        var audit = await Json.ReadAsync(await auditor.GetAsync("/api/v1/audit?entityType=certificate"), HttpStatusCode.OK);
        Assert.Equal(["issue", "amend", "replace", "withdraw"], audit["items"]!.AsArray().Select(e => e!["action"]!.GetValue<string>()).ToArray());
        Assert.True((await Json.ReadAsync(await auditor.GetAsync("/api/v1/audit/verify"), HttpStatusCode.OK))["intact"]!.GetValue<bool>());
    }

    [Fact]
    public async Task RegeneratingFromTheStoredSnapshotGivesTheSameTextAndTheStoredPdfCannotBeAltered()
    {
        var s = await ApprovedBudgetAsync();
        var cert = await Json.PostAsync(s.Tech, "/api/v1/certificates", IssueBody(s.Budget), HttpStatusCode.Created);
        byte[] stored = await s.Tech.GetByteArrayAsync($"/api/v1/certificates/{cert["id"]}.pdf");
        string db = System.IO.Path.Combine(_factory.DataDirectory, "calbudget.db");
        using var connection = new SqliteConnection($"Data Source={db}");
        connection.Open();
        using var read = connection.CreateCommand();
        read.CommandText = "SELECT content FROM certificates WHERE id = $id";
        read.Parameters.AddWithValue("$id", cert["id"]!.GetValue<long>());
        string content = (string)read.ExecuteScalar()!;
        var options = _factory.Services.GetRequiredService<IOptions<JsonOptions>>().Value.SerializerOptions;
        var again = _factory.Services.GetRequiredService<CertificateSetup>().Renderer.Render(JsonSerializer.Deserialize<CertificateContent>(content, options)!);
        Assert.Equal(Pages(stored), Pages(again));

        using var tamper = connection.CreateCommand();
        tamper.CommandText = "UPDATE certificates SET pdf = x'00' WHERE id = $id";
        tamper.Parameters.AddWithValue("$id", cert["id"]!.GetValue<long>());
        Assert.Throws<SqliteException>(() => tamper.ExecuteNonQuery());
    }

    [Fact]
    public async Task OnePageRendersToPngWhenPdftoppmIsPresent()
    {
        if (!File.Exists("/usr/bin/pdftoppm"))
        {
            return; // tests/run.sh installs poppler-utils, so CI always renders
        }

        var s = await ApprovedBudgetAsync();
        var cert = await Json.PostAsync(s.Tech, "/api/v1/certificates", IssueBody(s.Budget), HttpStatusCode.Created);
        string folder = Directory.CreateTempSubdirectory("calbudget-png-").FullName;
        try
        {
            string pdf = System.IO.Path.Combine(folder, "certificate.pdf");
            await File.WriteAllBytesAsync(pdf, await s.Tech.GetByteArrayAsync($"/api/v1/certificates/{cert["id"]}.pdf"));
            using var process = Process.Start(new ProcessStartInfo("/usr/bin/pdftoppm", ["-png", "-r", "60", "-f", "1", "-l", "1", pdf, System.IO.Path.Combine(folder, "page")]))!;
            await process.WaitForExitAsync();
            Assert.Equal(0, process.ExitCode);
            byte[] png = await File.ReadAllBytesAsync(Directory.GetFiles(folder, "page*.png").Single());
            Assert.Equal([0x89, (byte)'P', (byte)'N', (byte)'G'], png[..4]);
            Assert.True(png.Length > 10_000, $"{png.Length} bytes");
        }
        finally
        {
            Directory.Delete(folder, recursive: true);
        }
    }

    [Fact]
    public async Task TheNumberFollowsTheConfiguredPattern()
    {
        using var factory = new ServiceFactory(settings: new() { ["CalBudget:CertificateNumberPattern"] = "CAL/{yy}{MM}/{seq:000}-T" });
        var s = await ApprovedBudgetAsync(factory: factory);
        string expected = $"CAL/{DateTimeOffset.UtcNow:yyMM}/";
        var first = await Json.PostAsync(s.Tech, "/api/v1/certificates", IssueBody(s.Budget), HttpStatusCode.Created);
        var other = await ApprovedBudgetAsync("CB-0302", factory: factory);
        var second = await Json.PostAsync(other.Tech, "/api/v1/certificates", IssueBody(other.Budget), HttpStatusCode.Created);
        Assert.Equal(expected + "001-T", first["number"]!.GetValue<string>());
        Assert.Equal(expected + "002-T", second["number"]!.GetValue<string>());
    }

    [Fact]
    public void AFontFolderWithoutUsableFontsStopsTheStartNamingIt()
    {
        string folder = Directory.CreateTempSubdirectory("calbudget-fonts-").FullName;
        File.WriteAllBytes(System.IO.Path.Combine(folder, "NotAFont.ttf"), Encoding.ASCII.GetBytes("this is not a TrueType font file"));
        try
        {
            var ex = Assert.Throws<FontsNotFoundException>(() => CertificateFonts.Find(folder));
            Assert.Contains(folder, ex.Message, StringComparison.Ordinal);
            Assert.Contains("FontDirectory", ex.Message, StringComparison.Ordinal);
            using var factory = new ServiceFactory(settings: new() { ["CalBudget:FontDirectory"] = folder });
            var start = Assert.ThrowsAny<Exception>(() => factory.CreateClient());
            Assert.Contains(folder, (start as FontsNotFoundException ?? start.InnerException as FontsNotFoundException)?.Message ?? start.ToString(), StringComparison.Ordinal);
        }
        finally
        {
            Directory.Delete(folder, recursive: true);
        }
    }
}
