using System.Net;
using System.Text.RegularExpressions;
using CalBudget.Api.Auth;
using Microsoft.AspNetCore.Http.Metadata;
using Microsoft.AspNetCore.Mvc.Testing;
using Microsoft.AspNetCore.Routing;
using Microsoft.Extensions.DependencyInjection;

namespace CalBudget.Api.Tests;

/// <summary>
/// The staff pages' role table (DEVELOPERS.md), by hand, against every page the service maps: signed out, every page
/// but sign-in sends to /sign-in; signed in with each role, a page the role may not use answers 403 or sends to /denied,
/// enforced on the server whatever the page shows. An API key opens no page.
/// </summary>
public sealed partial class PageRoleMatrixTests : IDisposable
{
    private const string T = "technician", A = "approver", U = "auditor", I = "integration", D = "admin";
    private static readonly string[] Everyone = [T, A, U, I, D];
    private static readonly string[] Writers = [T, I];

    private static readonly (string Method, string Route, string Path, string[]? Roles)[] Matrix =
    [
        ("GET", "/static/site.css", "/static/site.css", null),
        ("GET", "/sign-in", "/sign-in", null),
        ("POST", "/sign-in", "/sign-in", null),
        ("GET", "/", "/", Everyone),
        ("POST", "/sign-out", "/sign-out", Everyone),
        ("GET", "/denied", "/denied", Everyone),
        ("GET", "/instruments", "/instruments", Everyone),
        ("GET", "/instruments/new", "/instruments/new", Writers),
        ("POST", "/instruments/new", "/instruments/new", Writers),
        ("GET", "/instruments/{id:long}", "/instruments/999", Everyone),
        ("GET", "/instruments/{id:long}/runs/new", "/instruments/999/runs/new", Writers),
        ("POST", "/instruments/{id:long}/runs/new", "/instruments/999/runs/new", Writers),
        ("GET", "/runs/{id:long}", "/runs/999", Everyone),
        ("GET", "/runs/{id:long}/stability.png", "/runs/999/stability.png", Everyone),
        ("POST", "/runs/{id:long}/budgets", "/runs/999/budgets", Writers),
        ("GET", "/budgets/{id:long}", "/budgets/999", Everyone),
        ("POST", "/budgets/{id:long}/approve", "/budgets/999/approve", [A]),
        ("POST", "/budgets/{id:long}/certificates", "/budgets/999/certificates", [T, A, I]),
        ("GET", "/certificates/{id:long}.pdf", "/certificates/999.pdf", Everyone),
        ("GET", "/audit", "/audit", [U, D]),
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
