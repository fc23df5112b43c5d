using System.Net;
using System.Text.RegularExpressions;
using CalBudget.Api.Auth;
using Microsoft.AspNetCore.Http.Metadata;
using Microsoft.AspNetCore.Mvc.Testing;
using Microsoft.AspNetCore.Routing;
using Microsoft.Extensions.DependencyInjection;

namespace CalBudget.Api.Tests;

/// <summary>
/// The staff pages' role table as the contributor guide (DEVELOPERS.md, "Roles") states it, against every page the
/// service maps: signed out, every page
/// but sign-in sends to /sign-in; signed in with each role, a page the role may not use answers 403 or sends to /denied,
/// enforced on the server whatever the page shows. An API key opens no page.
/// </summary>
public sealed partial class PageRoleMatrixTests : IDisposable
{
    private const string T = "technician", I = "integration", D = "admin";
    private static readonly string[] Everyone = [T, "approver", "auditor", I, D];
    private static readonly Lazy<IReadOnlyDictionary<string, string[]?>> Guide = new(() => ContributorGuide.PageRoles(Everyone));

    // Each page (method, route as mapped, a concrete path) with its roles from the guide (null: no sign-in needed).
    private static (string Method, string Route, string Path, string[]? Roles)[] Matrix => Pages.Select(p =>
        (p.Method, p.Route, p.Path, Guide.Value.TryGetValue($"{p.Method} {Documented(p.Route)}", out var roles) ? roles
            : throw new InvalidOperationException($"{p.Method} {Documented(p.Route)} has no row in the guide's pages table"))).ToArray();

    private static string Documented(string route) => Regex.Replace(route, @"\{(\w+):[^}]+\}", "{$1}");

    private static readonly (string Method, string Route, string Path)[] Pages =
    [
        ("GET", "/static/site.css", "/static/site.css"),
        ("GET", "/sign-in", "/sign-in"),
        ("POST", "/sign-in", "/sign-in"),
        ("GET", "/", "/"),
        ("POST", "/sign-out", "/sign-out"),
        ("GET", "/denied", "/denied"),
        ("GET", "/instruments", "/instruments"),
        ("GET", "/instruments/new", "/instruments/new"),
        ("POST", "/instruments/new", "/instruments/new"),
        ("GET", "/instruments/{id:long}", "/instruments/999"),
        ("GET", "/instruments/{id:long}/edit", "/instruments/999/edit"),
        ("POST", "/instruments/{id:long}/edit", "/instruments/999/edit"),
        ("GET", "/references", "/references"),
        ("GET", "/admin", "/admin"),
        ("POST", "/admin/users", "/admin/users"),
        ("POST", "/admin/keys", "/admin/keys"),
        ("POST", "/admin/keys/revoke", "/admin/keys/revoke"),
        ("POST", "/budgets/{id:long}/versions", "/budgets/999/versions"),
        ("GET", "/budgets/{id:long}/diff", "/budgets/999/diff?from=1&to=2"),
        ("GET", "/instruments/{id:long}/runs/new", "/instruments/999/runs/new"),
        ("POST", "/instruments/{id:long}/runs/new", "/instruments/999/runs/new"),
        ("GET", "/runs/{id:long}", "/runs/999"),
        ("GET", "/runs/{id:long}/stability.png", "/runs/999/stability.png"),
        ("POST", "/runs/{id:long}/budgets", "/runs/999/budgets"),
        ("GET", "/budgets/{id:long}", "/budgets/999"),
        ("POST", "/budgets/{id:long}/approve", "/budgets/999/approve"),
        ("POST", "/budgets/{id:long}/certificates", "/budgets/999/certificates"),
        ("GET", "/certificates/{id:long}.pdf", "/certificates/999.pdf"),
        ("GET", "/audit", "/audit"),
    ];

    private readonly ServiceFactory _factory = new();

    public void Dispose() => _factory.Dispose();

    [GeneratedRegex("name=\"__RequestVerificationToken\" value=\"([^\"]+)\"")]
    private static partial Regex TokenPattern();

    private HttpClient Browser() => _factory.CreateClient(new WebApplicationFactoryClientOptions { AllowAutoRedirect = false, HandleCookies = true });

    private static async Task<string> TokenAsync(HttpClient client, string path)
    {
        string html = await client.GetStringAsync(path);
        return TokenPattern().Match(html).Groups[1].Value;
    }

    private async Task<HttpClient> SignedInAsync(string role)
    {
        string name = $"{role}-{Guid.NewGuid():N}"[..20];
        await _factory.Services.GetRequiredService<UserAccounts>().CreateAsync(name, role, "correct horse battery");
        var client = Browser();
        string token = await TokenAsync(client, "/sign-in");
        var answer = await client.PostAsync("/sign-in", new FormUrlEncodedContent(new Dictionary<string, string>
        {
            ["__RequestVerificationToken"] = token, ["name"] = name, ["password"] = "correct horse battery", ["returnUrl"] = "/instruments",
        }));
        Assert.Equal(HttpStatusCode.Redirect, answer.StatusCode);
        return client;
    }

    private static async Task<HttpResponseMessage> SendAsync(HttpClient client, (string Method, string Route, string Path, string[]? Roles) row, string token)
    {
        if (row.Method == "GET")
        {
            return await client.GetAsync(row.Path);
        }

        var form = new MultipartFormDataContent { { new StringContent(token), "__RequestVerificationToken" }, { new StringContent("1"), "version" } };
        return await client.PostAsync(row.Path, form);
    }

    [Fact]
    public void TheGuidesTableHasARowForEveryPageAndNoOther() =>
        Assert.Equal(Pages.Select(p => $"{p.Method} {Documented(p.Route)}").Order(StringComparer.Ordinal), Guide.Value.Keys.Order(StringComparer.Ordinal));

    [Fact]
    public void TheTableListsEveryPage()
    {
        var mapped = _factory.Services.GetRequiredService<EndpointDataSource>().Endpoints.OfType<RouteEndpoint>()
            .Where(e => e.Metadata.GetMetadata<ITagsMetadata>()?.Tags.Contains(CalBudget.Api.Pages.StaffPages.Tag) == true)
            .SelectMany(e => (e.Metadata.GetMetadata<HttpMethodMetadata>()?.HttpMethods ?? ["*"]).Select(m => $"{m} {"/" + (e.RoutePattern.RawText ?? "").Trim('/')}"))
            .Order(StringComparer.Ordinal).ToArray();
        Assert.Equal(Matrix.Select(r => $"{r.Method} {r.Route}").Order(StringComparer.Ordinal), mapped);
    }

    [Fact]
    public async Task EveryRoleGetsWhatTheTableSays()
    {
        var anonymous = Browser();
        foreach (var row in Matrix.Where(r => r.Roles is not null))
        {
            var answer = await SendAsync(anonymous, row, "");
            bool toSignIn = answer.StatusCode == HttpStatusCode.Redirect && answer.Headers.Location!.ToString().Contains("/sign-in", StringComparison.Ordinal);
            Assert.True(toSignIn || answer.StatusCode == HttpStatusCode.BadRequest, $"{row.Method} {row.Route} signed out: {(int)answer.StatusCode} {answer.Headers.Location}");
        }

        foreach (string role in Everyone)
        {
            foreach (var row in Matrix.Where(r => r.Roles is not null))
            {
                var client = await SignedInAsync(role);
                string token = await TokenAsync(client, "/instruments");
                var answer = await SendAsync(client, row, token);
                if (row.Route == "/denied")
                {
                    Assert.Equal(HttpStatusCode.Forbidden, answer.StatusCode); // the page that says so, to anyone signed in
                    continue;
                }

                bool denied = answer.StatusCode == HttpStatusCode.Forbidden
                    || (answer.StatusCode == HttpStatusCode.Redirect && answer.Headers.Location!.ToString().Contains("/denied", StringComparison.Ordinal));
                Assert.True(row.Roles!.Contains(role) != denied, $"{row.Method} {row.Route} as {role}: {(int)answer.StatusCode} {answer.Headers.Location}");
                Assert.NotEqual(HttpStatusCode.InternalServerError, answer.StatusCode);
            }
        }
    }

    [Fact]
    public async Task AnApiKeyOpensNoPageAndAPostWithoutTheAntiforgeryTokenIsRefused()
    {
        var keyed = _factory.CreateClient(new WebApplicationFactoryClientOptions { AllowAutoRedirect = false });
        keyed.DefaultRequestHeaders.Authorization = new("Bearer", await _factory.Keys.CreateAsync("pages-" + Guid.NewGuid().ToString("N")[..8], "technician"));
        var answer = await keyed.GetAsync("/instruments");
        Assert.Equal(HttpStatusCode.Redirect, answer.StatusCode);
        Assert.Contains("/sign-in", answer.Headers.Location!.ToString(), StringComparison.Ordinal);

        var signedIn = await SignedInAsync(T);
        var forged = await signedIn.PostAsync("/instruments/new", new FormUrlEncodedContent(new Dictionary<string, string> { ["assetNumber"] = "CB-0999" }));
        Assert.Equal(HttpStatusCode.BadRequest, forged.StatusCode);
        Assert.DoesNotContain("CB-0999", await signedIn.GetStringAsync("/instruments"), StringComparison.Ordinal);
    }

    [GeneratedRegex("first password, shown once: ([A-Za-z0-9_-]+)")]
    private static partial Regex PasswordPattern();

    [Fact]
    public async Task AnAdminAddsAPersonWhoCanThenSignInAndMakesAndRevokesAKey()
    {
        var admin = await SignedInAsync(D);
        string token = await TokenAsync(admin, "/admin");
        var added = await admin.PostAsync("/admin/users", new FormUrlEncodedContent(new Dictionary<string, string>
        {
            ["__RequestVerificationToken"] = token, ["name"] = "new.technician", ["role"] = T,
        }));
        string page = await added.Content.ReadAsStringAsync();
        string password = PasswordPattern().Match(page).Groups[1].Value;
        Assert.True(password.Length >= 12, page);
        var client = Browser();
        var signIn = await client.PostAsync("/sign-in", new FormUrlEncodedContent(new Dictionary<string, string>
        {
            ["__RequestVerificationToken"] = await TokenAsync(client, "/sign-in"), ["name"] = "new.technician", ["password"] = password,
        }));
        Assert.Equal(HttpStatusCode.Redirect, signIn.StatusCode);
        var again = await admin.PostAsync("/admin/users", new FormUrlEncodedContent(new Dictionary<string, string>
        {
            ["__RequestVerificationToken"] = token, ["name"] = "new.technician", ["role"] = T,
        }));
        Assert.Equal(HttpStatusCode.BadRequest, again.StatusCode);
        Assert.Contains("exists already", await again.Content.ReadAsStringAsync(), StringComparison.Ordinal);

        var made = await admin.PostAsync("/admin/keys", new FormUrlEncodedContent(new Dictionary<string, string>
        {
            ["__RequestVerificationToken"] = token, ["name"] = "bench-9", ["role"] = I,
        }));
        string key = Regex.Match(await made.Content.ReadAsStringAsync(), "shown once: (cbk_[A-Za-z0-9_-]+)").Groups[1].Value;
        var keyed = _factory.ClientWithKey(key);
        Assert.Equal(HttpStatusCode.OK, (await keyed.GetAsync("/api/v1/instruments")).StatusCode);
        await admin.PostAsync("/admin/keys/revoke", new FormUrlEncodedContent(new Dictionary<string, string> { ["__RequestVerificationToken"] = token, ["name"] = "bench-9" }));
        Assert.NotNull((await _factory.Keys.ListAsync()).Single(k => k.Name == "bench-9").RevokedAt);
    }

    [Fact]
    public async Task AnEditMadeFromAStaleFormIsRefusedAndKeepsWhatWasTyped()
    {
        var tech = await SignedInAsync(T);
        var keyed = await _factory.ClientAsync(T);
        var created = await keyed.PostAsync("/api/v1/instruments", Json.Body("""
            { "assetNumber": "CB-0555", "customer": "Harbour Test House", "manufacturer": "Vexmoor Electronics", "model": "SA-7",
              "timebase": { "oscillatorKind": "OCXO", "nominalFrequencyHz": 10000000 }, "postures": [ { "name": "standing on its feet", "up": "+z" } ] }
            """));
        long id = (await Json.ReadAsync(created, HttpStatusCode.Created))["id"]!.GetValue<long>();
        string token = await TokenAsync(tech, $"/instruments/{id}/edit");
        var form = new Dictionary<string, string>
        {
            ["__RequestVerificationToken"] = token, ["version"] = "1", ["assetNumber"] = "CB-0555", ["customer"] = "Harbour Test House Ltd",
            ["manufacturer"] = "Vexmoor Electronics", ["model"] = "SA-7", ["nominalFrequencyHz"] = "10000000", ["oscillatorKind"] = "OCXO",
        };
        Assert.Equal(HttpStatusCode.Redirect, (await tech.PostAsync($"/instruments/{id}/edit", new FormUrlEncodedContent(form))).StatusCode);
        Assert.Contains("Harbour Test House Ltd", await tech.GetStringAsync($"/instruments/{id}"), StringComparison.Ordinal);
        form["customer"] = "Harbour Test House (stale)";
        var stale = await tech.PostAsync($"/instruments/{id}/edit", new FormUrlEncodedContent(form));
        Assert.Equal(HttpStatusCode.BadRequest, stale.StatusCode);
        string html = await stale.Content.ReadAsStringAsync();
        Assert.Contains("Harbour Test House (stale)", html, StringComparison.Ordinal);
        Assert.Contains("Nothing was saved", html, StringComparison.Ordinal);
    }

    [Fact]
    public async Task FiveWrongPasswordsLockTheAccount()
    {
        await _factory.Services.GetRequiredService<UserAccounts>().CreateAsync("lock.me", T, "correct horse battery");
        var client = Browser();
        async Task<HttpResponseMessage> TryAsync(string password) => await client.PostAsync("/sign-in", new FormUrlEncodedContent(new Dictionary<string, string>
        {
            ["__RequestVerificationToken"] = await TokenAsync(client, "/sign-in"), ["name"] = "lock.me", ["password"] = password,
        }));
        for (int i = 0; i < UserAccounts.MaxFailures; i++)
        {
            Assert.Equal(HttpStatusCode.Unauthorized, (await TryAsync("wrong " + i)).StatusCode);
        }

        var locked = await TryAsync("correct horse battery");
        Assert.Equal(HttpStatusCode.Unauthorized, locked.StatusCode);
        Assert.Contains("locked", await locked.Content.ReadAsStringAsync(), StringComparison.Ordinal);
    }
}
