using System.Globalization;
using System.Net;
using System.Text;
using System.Text.RegularExpressions;
using CalBudget.Api.Auth;
using Microsoft.AspNetCore.Mvc.Testing;
using Microsoft.Extensions.DependencyInjection;

namespace CalBudget.Api.Tests;

/// <summary>
/// The certificate issue form on the budget page: refused for any one of its fields, it comes back with every field as
/// typed (the decision rule included) and the error next to the field the API named.
/// </summary>
public sealed partial class IssueFormTests : IDisposable
{
    private readonly ServiceFactory _factory = new();

    public void Dispose() => _factory.Dispose();

    [GeneratedRegex("name=\"__RequestVerificationToken\" value=\"([^\"]+)\"")]
    private static partial Regex TokenPattern();

    private async Task<(HttpClient Page, long Budget)> SetUpAsync()
    {
        var tech = await _factory.ClientAsync("technician", holder: "kim");
        var approver = await _factory.ClientAsync("approver", holder: "ola");
        string instrument = """
        { "assetNumber": "CB-0801", "customer": "Fenwick Marine Electronics", "manufacturer": "Quillon Instruments", "model": "FC-900",
          "timebase": { "oscillatorKind": "OCXO", "nominalFrequencyHz": 10000000,
            "specification": { "tolerance": { "lower": -2e-8, "upper": 2e-8 }, "temperatureCoefficientPerKelvin": 1e-11, "accelerationSensitivityPerG": 1e-9, "retrace": 2e-9 } },
          "postures": [ { "name": "standing on its feet", "up": "+z" } ] }
        """;
        long instrumentId = (await Json.PostAsync(tech, "/api/v1/instruments", instrument, HttpStatusCode.Created))["id"]!.GetValue<long>();
        long reference = await LabRecords.ReferenceAsync(tech, "RB-0801");
        long run = (await Json.PostAsync(tech, "/api/v1/calibrations", LabRecords.RunBody(instrumentId, reference), HttpStatusCode.Created))["id"]!.GetValue<long>();
        var csv = new StringBuilder("timestamp,fractionalOffset\n");
        for (int k = 0; k < 100; k++)
        {
            csv.Append(CultureInfo.InvariantCulture, $"2026-11-30T09:{k / 60:00}:{k % 60:00}Z,{2e-9 + 1e-12 * (k % 7)}\n");
        }

        await Json.ReadAsync(await tech.PostAsync($"/api/v1/calibrations/{run}/readings", new StringContent(csv.ToString(), Encoding.UTF8, "text/csv")), HttpStatusCode.Created);
        // the template's aging line has no specified rate here: overridden with its reason
        long budget = (await Json.PostAsync(tech, "/api/v1/budgets", $$"""
            { "runId": {{run}}, "templateId": "ocxo-counter", "overrides": [ { "name": "aging", "reason": "aging stated by the customer's data", "distribution": "rectangular", "halfWidth": 3e-9 } ] }
            """, HttpStatusCode.Created))["id"]!.GetValue<long>();
        await Json.ReadAsync(await approver.PostAsync($"/api/v1/budgets/{budget}/versions/1/approve", Json.Body("{}")), HttpStatusCode.OK);

        await _factory.Services.GetRequiredService<UserAccounts>().CreateAsync("form.tech", "technician", "correct horse battery");
        var page = _factory.CreateClient(new WebApplicationFactoryClientOptions { AllowAutoRedirect = false, HandleCookies = true });
        string token = TokenPattern().Match(await page.GetStringAsync("/sign-in")).Groups[1].Value;
        var signIn = await page.PostAsync("/sign-in", new FormUrlEncodedContent(new Dictionary<string, string>
        {
            ["__RequestVerificationToken"] = token, ["name"] = "form.tech", ["password"] = "correct horse battery", ["returnUrl"] = "/instruments",
        }));
        Assert.Equal(HttpStatusCode.Redirect, signIn.StatusCode);
        return (page, budget);
    }

    // every field of the form, as typed
    private static Dictionary<string, string> Typed() => new()
    {
        ["receivedAt"] = "2026-11-27", ["itemCondition"] = "dent on the rear panel", ["rule"] = "simple-acceptance", ["lowRatioReason"] = "the bench limit",
        ["recall"] = "yes", ["adjusted"] = "yes", ["asLeftBudgetId"] = "77", ["asLeftVersion"] = "1",
    };

    public static TheoryData<string, string, string> Refusals => new()
    {
        { "receivedAt", "27/11/2026", "receivedAt" },                 // not a date as the form asks
        { "receivedAt", "2099-01-01", "receivedAt" },                 // in the future (checked once the as-left box is cleared)
        { "itemCondition", "", "itemCondition" },                     // required
        { "asLeftBudgetId", "seventy", "asLeftBudgetId" },            // not a whole number
        { "asLeftVersion", "-1", "asLeftVersion" },
        { "asLeftBudgetId", "9999", "asLeftBudgetId" },               // no such budget
        { "adjusted", "", "recallInterval" },                         // no adjustment: the recall asked for has neither an aging fit nor a specified aging
    };

    [Theory]
    [MemberData(nameof(Refusals))]
    public async Task ARefusedFormComesBackWithEveryFieldAsTyped(string field, string value, string errorField)
    {
        var (page, budget) = await SetUpAsync();
        string token = TokenPattern().Match(await page.GetStringAsync($"/budgets/{budget}")).Groups[1].Value;
        var typed = Typed();
        typed[field] = value;
        if (field == "receivedAt" && value.StartsWith("2099", StringComparison.Ordinal))
        {
            typed["adjusted"] = "";
        }
        var form = new Dictionary<string, string>(typed) { ["__RequestVerificationToken"] = token, ["version"] = "1" };
        var answer = await page.PostAsync($"/budgets/{budget}/certificates", new FormUrlEncodedContent(form));
        string html = await answer.Content.ReadAsStringAsync();
        // the page comes back with the refusal's status (400, 409 or 422), the form in it
        Assert.True((int)answer.StatusCode is 400 or 409 or 422, $"{answer.StatusCode}: {html[..Math.Min(html.Length, 600)]}");
        Assert.Contains($"action=\"/budgets/{budget}/certificates\"", html, StringComparison.Ordinal);

        // the error next to its field
        Assert.Matches($"id=\"{Regex.Escape(errorField)}-error\"", html);
        // every text field keeps what was typed, the rule stays chosen, the boxes stay ticked
        foreach (string text in new[] { "receivedAt", "itemCondition", "lowRatioReason", "asLeftBudgetId", "asLeftVersion" })
        {
            Assert.Contains($"name=\"{text}\" value=\"{System.Net.WebUtility.HtmlEncode(typed[text])}\"", html, StringComparison.Ordinal);
        }

        Assert.Matches("<option value=\"simple-acceptance\" selected", html);
        Assert.Matches("id=\"recall\" name=\"recall\" value=\"yes\" checked", html);
        if (typed["adjusted"] == "yes")
        {
            Assert.Matches("id=\"adjusted\" name=\"adjusted\" value=\"yes\" checked", html);
        }
        else
        {
            Assert.DoesNotMatch("id=\"adjusted\" name=\"adjusted\" value=\"yes\" checked", html);
        }
        Assert.Empty((await Json.ReadAsync(await (await _factory.ClientAsync("auditor")).GetAsync("/api/v1/certificates"), HttpStatusCode.OK))["items"]!.AsArray());
    }
}
