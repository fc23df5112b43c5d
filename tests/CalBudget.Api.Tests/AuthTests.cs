using System.Net;
using System.Net.Http.Headers;
using CalBudget.Api.Hosting;
using CalBudget.Data.Keys;
using Microsoft.Extensions.Time.Testing;

namespace CalBudget.Api.Tests;

public sealed class AuthTests : IDisposable
{
    private const string Budget = """{"contributions":[{"name":"a","distribution":"normal","standardUncertainty":1e-12}]}""";
    private readonly ServiceFactory _factory = new();

    public void Dispose() => _factory.Dispose();

    [Fact]
    public async Task MissingKeyIs401ProblemWithABearerChallenge()
    {
        using var response = await _factory.CreateClient().PostAsync("/api/v1/budgets/evaluate", Json.Body(Budget));
        await Json.ProblemAsync(response, HttpStatusCode.Unauthorized);
        Assert.Equal("Bearer", response.Headers.WwwAuthenticate.Single().Scheme);
    }

    [Theory]
    [InlineData("cbk_0123456789abcdef_not-a-real-secret-at-all")] // well formed, unknown
    [InlineData("cbk_short")]                                     // malformed
    [InlineData("")]
    public async Task UnknownOrMalformedKeyIs401(string key)
    {
        var client = _factory.ClientWithKey(key);
        await Json.ProblemAsync(await client.PostAsync("/api/v1/budgets/evaluate", Json.Body(Budget)), HttpStatusCode.Unauthorized);
    }

    [Fact]
    public async Task KnownKeyIdWithWrongSecretIs401()
    {
        string key = await _factory.Keys.CreateAsync("victim", Roles.Technician);
        var client = _factory.ClientWithKey(key[..^4] + "AAAA");
        await Json.ProblemAsync(await client.PostAsync("/api/v1/budgets/evaluate", Json.Body(Budget)), HttpStatusCode.Unauthorized);
    }

    [Fact]
    public async Task NonBearerSchemeIs401()
    {
        var client = _factory.CreateClient();
        client.DefaultRequestHeaders.Authorization = new AuthenticationHeaderValue("Basic", "dXNlcjpwYXNz");
        await Json.ProblemAsync(await client.PostAsync("/api/v1/budgets/evaluate", Json.Body(Budget)), HttpStatusCode.Unauthorized);
    }

    [Fact]
    public async Task RevokedKeyIs401()
    {
        string key = await _factory.Keys.CreateAsync("leaving", Roles.Integration);
        var client = _factory.ClientWithKey(key);
        await Json.ReadAsync(await client.PostAsync("/api/v1/budgets/evaluate", Json.Body(Budget)), HttpStatusCode.OK);
        await _factory.Keys.RevokeAsync("leaving");
        await Json.ProblemAsync(await client.PostAsync("/api/v1/budgets/evaluate", Json.Body(Budget)), HttpStatusCode.Unauthorized);
    }

    [Theory]
    [InlineData(Roles.Technician)]
    [InlineData(Roles.Approver)]
    [InlineData(Roles.Auditor)]
    [InlineData(Roles.Integration)]
    [InlineData(Roles.Admin)]
    public async Task EveryRoleMayEvaluate(string role)
    {
        var client = await _factory.ClientAsync(role);
        await Json.ReadAsync(await client.PostAsync("/api/v1/budgets/evaluate", Json.Body(Budget)), HttpStatusCode.OK);
    }

    [Theory]
    [InlineData(Roles.Technician)]
    [InlineData(Roles.Approver)]
    [InlineData(Roles.Auditor)]
    [InlineData(Roles.Integration)]
    public async Task KeyManagementIs403ForEveryRoleButAdmin(string role)
    {
        var client = await _factory.ClientAsync(role);
        var problem = await Json.ProblemAsync(await client.GetAsync("/api/v1/keys"), HttpStatusCode.Forbidden);
        Assert.Contains("admin", problem["detail"]!.GetValue<string>(), StringComparison.Ordinal);
    }

    [Fact]
    public async Task AdminManagesKeysOverHttpAndTheListNeverShowsAKey()
    {
        var admin = await _factory.ClientAsync(Roles.Admin);
        var created = await Json.PostAsync(admin, "/api/v1/keys", """{"name":"lims-east","role":"integration"}""", HttpStatusCode.Created);
        string key = created["key"]!.GetValue<string>();
        Assert.StartsWith("cbk_", key, StringComparison.Ordinal);
        // 256-bit secret: 43 base64url characters after the 16-digit id
        Assert.True(key.Length >= 4 + 16 + 1 + 43);

        using var list = await admin.GetAsync("/api/v1/keys");
        string listed = await list.Content.ReadAsStringAsync();
        Assert.Contains("lims-east", listed, StringComparison.Ordinal);
        Assert.DoesNotContain(key[21..], listed, StringComparison.Ordinal);

        await Json.PostAsync(admin, "/api/v1/keys", """{"name":"lims-east","role":"integration"}""", HttpStatusCode.Conflict);
        var bad = await Json.PostAsync(admin, "/api/v1/keys", """{"name":"x","role":"boss"}""", HttpStatusCode.BadRequest);
        Assert.Contains("role", Json.ErrorFields(bad));

        using var revoke = await admin.PostAsync("/api/v1/keys/lims-east/revoke", null);
        Assert.Equal(HttpStatusCode.NoContent, revoke.StatusCode);
        await Json.ProblemAsync(await admin.PostAsync("/api/v1/keys/lims-east/revoke", null), HttpStatusCode.Conflict);
        await Json.ProblemAsync(await admin.PostAsync("/api/v1/keys/nobody/revoke", null), HttpStatusCode.NotFound);
        await Json.ProblemAsync(await _factory.ClientWithKey(key).PostAsync("/api/v1/budgets/evaluate", Json.Body(Budget)), HttpStatusCode.Unauthorized);
    }

    [Fact]
    public async Task KeysAreStoredOnlyAsSaltedHashes()
    {
        string key = await _factory.Keys.CreateAsync("hash-check", Roles.Auditor);
        _ = _factory.CreateClient();
        Microsoft.Data.Sqlite.SqliteConnection.ClearAllPools();
        byte[] file = await File.ReadAllBytesAsync(Path.Combine(_factory.DataDirectory, CalBudget.Data.SqliteDatabase.FileName));
        byte[] wal = File.Exists(Path.Combine(_factory.DataDirectory, CalBudget.Data.SqliteDatabase.FileName + "-wal"))
            ? await File.ReadAllBytesAsync(Path.Combine(_factory.DataDirectory, CalBudget.Data.SqliteDatabase.FileName + "-wal")) : [];
        string secret = key[21..];
        Assert.DoesNotContain(secret, System.Text.Encoding.UTF8.GetString(file), StringComparison.Ordinal);
        Assert.DoesNotContain(secret, System.Text.Encoding.UTF8.GetString(wal), StringComparison.Ordinal);
    }

    [Fact]
    public async Task DemoKeysAndRecordsExistOnlyInDevelopment()
    {
        var (_, _, demoKey, _) = DatabaseStartup.DemoKeys[0];
        using (var development = new ServiceFactory("Development"))
        {
            var client = development.ClientWithKey(demoKey);
            await Json.ReadAsync(await client.PostAsync("/api/v1/budgets/evaluate", Json.Body(Budget)), HttpStatusCode.OK);
            // the invented demo laboratory: a dozen instruments of several kinds, two references, one falling due
            var instruments = await Json.ReadAsync(await client.GetAsync("/api/v1/instruments?limit=200"), HttpStatusCode.OK);
            Assert.Equal(12, instruments["items"]!.AsArray().Count);
            Assert.True(instruments["items"]!.AsArray().Select(i => i!["timebase"]!["oscillatorKind"]!.GetValue<string>()).Distinct().Count() >= 5);
            var references = await Json.ReadAsync(await client.GetAsync("/api/v1/references"), HttpStatusCode.OK);
            Assert.Equal(["due soon", "in calibration"], references["items"]!.AsArray().Select(r => r!["status"]!.GetValue<string>()));
            // a few runs with synthetic readings, one of them corrected by a second upload
            var runs = (await Json.ReadAsync(await client.GetAsync("/api/v1/calibrations"), HttpStatusCode.OK))["items"]!.AsArray();
            Assert.InRange(runs.Count, 3, 10);
            Assert.All(runs, r => Assert.True(r!["readings"]!["count"]!.GetValue<long>() >= 100));
            Assert.Contains(runs, r => r!["readings"]!["uploads"]!.GetValue<long>() == 2);
            Assert.Contains(runs, r => r!["posture"]!["name"] is null);
        }

        using var production = new ServiceFactory("Production");
        await Json.ProblemAsync(await production.ClientWithKey(demoKey).PostAsync("/api/v1/budgets/evaluate", Json.Body(Budget)), HttpStatusCode.Unauthorized);
        var admin = await production.ClientAsync(Roles.Admin);
        Assert.Empty((await Json.ReadAsync(await admin.GetAsync("/api/v1/instruments"), HttpStatusCode.OK))["items"]!.AsArray());
        Assert.Empty((await Json.ReadAsync(await admin.GetAsync("/api/v1/calibrations"), HttpStatusCode.OK))["items"]!.AsArray());
    }
}

public sealed class KeyCacheTests
{
    [Fact]
    public async Task ARevocationByAnotherProcessTakesEffectWhenTheCacheLapses()
    {
        var time = new FakeTimeProvider();
        using var factory = new ServiceFactory();
        _ = factory.CreateClient();
        var database = Microsoft.Extensions.DependencyInjection.ServiceProviderServiceExtensions.GetRequiredService<CalBudget.Data.IDbConnectionFactory>(factory.Services);
        var store = new ApiKeyStore(database, time) { CacheLifetime = TimeSpan.FromSeconds(5) };
        var otherProcess = new ApiKeyStore(database, time);
        string key = await store.CreateAsync("cached", Roles.Technician);
        Assert.NotNull(await store.AuthenticateAsync(key));
        await otherProcess.RevokeAsync("cached");
        Assert.NotNull(await store.AuthenticateAsync(key)); // still remembered
        time.Advance(TimeSpan.FromSeconds(6));
        Assert.Null(await store.AuthenticateAsync(key));
    }

    [Fact]
    public async Task ACachedKeyStillNeedsItsSecret()
    {
        using var factory = new ServiceFactory();
        string key = await factory.Keys.CreateAsync("secretive", Roles.Auditor);
        Assert.NotNull(await factory.Keys.AuthenticateAsync(key));
        Assert.Null(await factory.Keys.AuthenticateAsync(key[..^3] + "xyz"));
    }
}
