using System.Globalization;
using System.Net.Http.Headers;
using System.Text;
using CalBudget.Data.Keys;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Playwright;
using UglyToad.PdfPig;

namespace CalBudget.Browser.Tests;

/// <summary>
/// The daily path in a real browser: a technician registers an instrument, records a run with its CSV, builds the
/// budget; an approver approves it and issues the certificate, which downloads as a PDF stating the posture; an auditor
/// reads everything, verifies the trail, and is refused every change.
/// </summary>
public sealed class StaffPathTests(BrowserHost host) : IClassFixture<BrowserHost>
{
    private async Task<IPage> SignInAsync(string name, string password)
    {
        var context = await host.Browser.NewContextAsync(new BrowserNewContextOptions { BaseURL = host.Address.ToString(), ViewportSize = new ViewportSize { Width = 1280, Height = 900 } });
        var page = await context.NewPageAsync();
        await page.GotoAsync("/instruments");
        Assert.EndsWith("/sign-in?ReturnUrl=%2Finstruments", page.Url, StringComparison.Ordinal); // every page needs sign-in
        await page.GetByLabel("Name").FillAsync(name);
        await page.GetByLabel("Password").FillAsync(password);
        await page.GetByRole(AriaRole.Button, new() { Name = "Sign in" }).ClickAsync();
        return page;
    }

    private async Task<long> ReferenceAsync()
    {
        string key = await host.Services.GetRequiredService<ApiKeyStore>().CreateAsync("browser-setup-" + Guid.NewGuid().ToString("N")[..8], "technician");
        using var client = new HttpClient { BaseAddress = host.Address };
        client.DefaultRequestHeaders.Authorization = new AuthenticationHeaderValue("Bearer", key);
        string body = $$"""
        { "identity": "RB-{{Guid.NewGuid().ToString("N")[..6]}}", "kind": "rubidium", "nominalFrequencyHz": 10000000,
          "calibration": { "certificateNumber": "TL-2026-0417", "issuingLab": "Regional time laboratory", "date": "2026-08-20T00:00:00Z",
                           "fractionalOffset": 1.5e-12, "expandedUncertainty": 2e-12, "coverageFactor": 2, "driftPerDay": 1e-14 },
          "dueDate": "{{DateTimeOffset.UtcNow.AddDays(200):O}}" }
        """;
        var response = await client.PostAsync("/api/v1/references", new StringContent(body, Encoding.UTF8, "application/json"));
        Assert.Equal(System.Net.HttpStatusCode.Created, response.StatusCode);
        return System.Text.Json.JsonDocument.Parse(await response.Content.ReadAsStringAsync()).RootElement.GetProperty("id").GetInt64();
    }

    private static string Csv()
    {
        var random = new Random(3);
        var csv = new StringBuilder("timestamp,frequencyHz\n");
        var start = new DateTimeOffset(2026, 11, 30, 9, 0, 0, TimeSpan.Zero);
        for (int k = 0; k < 400; k++)
        {
            double f = 10_000_000.00003 + 4e-5 * (random.NextDouble() - 0.5);
            csv.Append(CultureInfo.InvariantCulture, $"{start.AddSeconds(k + 1):yyyy-MM-dd'T'HH:mm:ss'Z'},{f:F7}\n");
        }

        return csv.ToString();
    }

    private static Task<byte[]> ShotAsync(IPage page, string name) =>
        page.ScreenshotAsync(new PageScreenshotOptions { Path = Path.Combine(BrowserHost.Screenshots, name + ".png"), FullPage = true });

    [Fact]
    public async Task TheWholePathFromInstrumentToCertificateWorksInTheBrowser()
    {
        await ReferenceAsync();
        var (techName, _, techPassword) = BrowserHost.Staff[0];

        // a wrong password is refused without saying which half was wrong
        var wrong = await SignInAsync(techName, "not the password");
        await Assertions.Expect(wrong.GetByRole(AriaRole.Alert)).ToContainTextAsync("The name or the password is not right.");

        var tech = await SignInAsync(techName, techPassword);
        await Assertions.Expect(tech.GetByRole(AriaRole.Heading, new() { Name = "Instruments" })).ToBeVisibleAsync();
        await tech.GetByRole(AriaRole.Link, new() { Name = "Register an instrument" }).ClickAsync();
        await tech.GetByLabel("Asset number").FillAsync("CB-0901");
        await tech.GetByLabel("Customer").FillAsync("Northfield Avionics");
        await tech.GetByLabel("Manufacturer").FillAsync("Quillon Instruments");
        await tech.GetByLabel("Model").FillAsync("FC-900");
        await tech.GetByLabel("Nominal frequency (Hz)").FillAsync("ten MHz");
        await tech.GetByLabel("Tolerance ±").FillAsync("2e-8");
        await tech.GetByLabel("Acceleration sensitivity").FillAsync("1e-9");
        await tech.GetByLabel("Temperature coefficient").FillAsync("1e-10");
        await tech.GetByLabel("Aging per day").FillAsync("1e-11");
        await tech.GetByLabel("Retrace").FillAsync("2e-9");
        await tech.GetByRole(AriaRole.Button, new() { Name = "Register" }).ClickAsync();

        // the error sits next to the field, and what was typed is still there
        var error = tech.Locator("#timebase\\.nominalFrequencyHz-error");
        await Assertions.Expect(error).ToContainTextAsync("Not a number: 'ten MHz'");
        await Assertions.Expect(tech.GetByLabel("Asset number")).ToHaveValueAsync("CB-0901");
        await Assertions.Expect(tech.GetByLabel("Nominal frequency (Hz)")).ToHaveValueAsync("ten MHz");
        await ShotAsync(tech, "instrument-form-error");
        await tech.GetByLabel("Nominal frequency (Hz)").FillAsync("10000000");
        await tech.GetByRole(AriaRole.Button, new() { Name = "Register" }).ClickAsync();
        await Assertions.Expect(tech.GetByRole(AriaRole.Heading, new() { Name = "Instrument CB-0901" })).ToBeVisibleAsync();

        await tech.GetByRole(AriaRole.Link, new() { Name = "Record a calibration run" }).ClickAsync();
        await tech.GetByLabel("Started (UTC").FillAsync("2026-11-30T09:00:00Z");
        await tech.GetByLabel("Ambient temperature").FillAsync("23.1");
        await tech.GetByLabel("Its variation over the run").FillAsync("0.3");
        await tech.GetByLabel("Powered on before the run").FillAsync("120");
        await tech.GetByLabel("Readings (CSV").SetInputFilesAsync(new FilePayload { Name = "counter.csv", MimeType = "text/csv", Buffer = Encoding.UTF8.GetBytes(Csv()) });
        await tech.GetByRole(AriaRole.Button, new() { Name = "Record the run" }).ClickAsync();
        await Assertions.Expect(tech.GetByRole(AriaRole.Heading, new() { Name = "Frequency stability" })).ToBeVisibleAsync();
        await Assertions.Expect(tech.GetByRole(AriaRole.Img)).ToHaveAttributeAsync("alt", new System.Text.RegularExpressions.Regex("Allan deviation"));
        await Assertions.Expect(tech.Locator("table")).ToContainTextAsync("white FM");
        await ShotAsync(tech, "run");

        await tech.GetByLabel("Template").SelectOptionAsync("ocxo-counter");
        await tech.GetByRole(AriaRole.Button, new() { Name = "Build" }).ClickAsync();
        await Assertions.Expect(tech.Locator(".state")).ToHaveTextAsync("draft");
        // both results, each with its own table: the calibration result and the labelled in-use prediction
        await Assertions.Expect(tech.Locator("dl.facts")).ToContainTextAsync("In-use prediction (not the uncertainty of the calibration result)");
        await Assertions.Expect(tech.GetByRole(AriaRole.Heading, new() { Name = "Calibration result: contributions" })).ToBeVisibleAsync();
        await Assertions.Expect(tech.GetByRole(AriaRole.Heading, new() { Name = "In-use prediction: contributions" })).ToBeVisibleAsync();
        string budgetUrl = tech.Url;
        await Assertions.Expect(tech.GetByRole(AriaRole.Button, new() { Name = "Approve" })).ToHaveCountAsync(0); // not an approver

        // a change is a new version with a reason; an override needs its own reason
        await tech.GetByLabel("Contribution", new() { Exact = true }).SelectOptionAsync("retrace");
        await tech.GetByLabel("Standard uncertainty (normal)").FillAsync("1.5e-9");
        await tech.GetByRole(AriaRole.Button, new() { Name = "Make the new version" }).ClickAsync();
        await Assertions.Expect(tech.Locator("#reason-error")).ToBeVisibleAsync();
        await Assertions.Expect(tech.GetByLabel("Standard uncertainty (normal)")).ToHaveValueAsync("1.5e-9");
        await tech.GetByLabel("Why (required)").FillAsync("retrace measured on this unit after transport");
        await tech.GetByLabel("Why this value").FillAsync("retrace test of 2026-11-29, three cycles");
        await tech.GetByRole(AriaRole.Button, new() { Name = "Make the new version" }).ClickAsync();
        await Assertions.Expect(tech.GetByRole(AriaRole.Heading, new() { Name = "Budget 1, version 2" })).ToBeVisibleAsync();
        await tech.GetByRole(AriaRole.Button, new() { Name = "Show the differences" }).ClickAsync();
        await Assertions.Expect(tech.Locator("tr.change-changed")).ToContainTextAsync("retrace");
        await ShotAsync(tech, "diff");

        var (approverName, _, approverPassword) = BrowserHost.Staff[1];
        var approver = await SignInAsync(approverName, approverPassword);
        await approver.GotoAsync(budgetUrl);
        await Assertions.Expect(approver.GetByRole(AriaRole.Heading, new() { Name = "Approve version 2" })).ToBeVisibleAsync();
        await approver.GetByRole(AriaRole.Button, new() { Name = "Approve" }).ClickAsync();
        await Assertions.Expect(approver.Locator(".state")).ToHaveTextAsync("approved");
        await ShotAsync(approver, "budget");
        await approver.GetByLabel("Date of receipt").FillAsync("2026-11-27");
        await approver.GetByLabel("Condition on receipt").FillAsync("no visible damage");
        await approver.GetByLabel("Decision rule").SelectOptionAsync("non-binary");
        await approver.GetByRole(AriaRole.Button, new() { Name = "Issue" }).ClickAsync();
        var link = approver.Locator("li[id^=certificate-] a");
        await Assertions.Expect(link).ToHaveCountAsync(1);
        var download = await approver.RunAndWaitForDownloadAsync(() => link.ClickAsync());
        Assert.EndsWith(".pdf", download.SuggestedFilename, StringComparison.Ordinal);
        byte[] bytes = await File.ReadAllBytesAsync(await download.PathAsync());
        Assert.Equal("%PDF", Encoding.ASCII.GetString(bytes, 0, 4));
        using (var document = PdfDocument.Open(bytes))
        {
            string text = string.Join(" ", document.GetPages().SelectMany(p => p.GetWords()).Select(w => w.Text));
            Assert.Contains("Calibrated standing on its feet: up vector (0, 0, 1)", text, StringComparison.Ordinal);
        }

        var (auditorName, _, auditorPassword) = BrowserHost.Staff[2];
        var auditor = await SignInAsync(auditorName, auditorPassword);
        await auditor.GotoAsync(budgetUrl);
        await Assertions.Expect(auditor.Locator(".state")).ToHaveTextAsync("approved");
        await Assertions.Expect(auditor.Locator("form[method=post] button")).ToHaveTextAsync("Sign out"); // no change control at all
        // the server refuses what the page does not offer: an approval posted with a valid antiforgery token from the auditor's own page
        var token = await auditor.Locator("input[name=__RequestVerificationToken]").First.GetAttributeAsync("value");
        var refused = await auditor.Context.APIRequest.PostAsync(budgetUrl.Replace("/budgets/", "/budgets/", StringComparison.Ordinal) + "/approve",
            new APIRequestContextOptions { Form = auditor.Context.APIRequest.CreateFormData().Set("__RequestVerificationToken", token!).Set("version", "2"), MaxRedirects = 0 });
        Assert.True(refused.Status is 302 or 403, $"auditor approve: {refused.Status}");
        Assert.True(refused.Status == 403 || (refused.Headers.GetValueOrDefault("location") ?? "").Contains("/denied", StringComparison.Ordinal));
        await auditor.GotoAsync("/audit");
        await auditor.GetByRole(AriaRole.Button, new() { Name = "Verify the whole trail" }).ClickAsync();
        await Assertions.Expect(auditor.GetByRole(AriaRole.Status)).ToContainTextAsync("Intact");
        await Assertions.Expect(auditor.Locator("table")).ToContainTextAsync("approve");
        await ShotAsync(auditor, "audit");
        await auditor.GotoAsync("/references");
        await Assertions.Expect(auditor.Locator("table")).ToContainTextAsync("in use");
        await auditor.GotoAsync("/admin");
        await Assertions.Expect(auditor.GetByRole(AriaRole.Heading, new() { Name = "Not allowed" })).ToBeVisibleAsync();

        // a narrow screen keeps the page usable
        await auditor.SetViewportSizeAsync(390, 800);
        await auditor.GotoAsync("/instruments");
        await Assertions.Expect(auditor.GetByRole(AriaRole.Link, new() { Name = "CB-0901" })).ToBeVisibleAsync();
    }

    [Fact]
    public async Task PagesCarryTheSecurityHeadersAndTheSessionCookieIsHttpOnlyAndStrict()
    {
        var (name, _, password) = BrowserHost.Staff[0];
        var page = await SignInAsync(name, password);
        var response = await page.GotoAsync("/instruments");
        var headers = response!.Headers;
        Assert.Contains("frame-ancestors 'none'", headers["content-security-policy"], StringComparison.Ordinal);
        Assert.Contains("script-src 'none'", headers["content-security-policy"], StringComparison.Ordinal);
        Assert.Equal("nosniff", headers["x-content-type-options"]);
        Assert.Equal("no-referrer", headers["referrer-policy"]);
        var cookie = (await page.Context.CookiesAsync()).Single(c => c.Name == "calbudget.staff");
        Assert.True(cookie.HttpOnly);
        Assert.Equal(SameSiteAttribute.Strict, cookie.SameSite);
    }
}
