using System.Net.Http.Headers;
using CalBudget.Data.Keys;
using Microsoft.AspNetCore.Hosting;
using Microsoft.AspNetCore.Mvc.Testing;
using Microsoft.Data.Sqlite;
using Microsoft.Extensions.DependencyInjection;

namespace CalBudget.Api.Tests;

/// <summary>
/// The real host on the test server, with a database of its own in a fresh temporary data directory (the real
/// migrations applied), so no test sees another's data. Settings can be overridden per factory.
/// </summary>
public class ServiceFactory : WebApplicationFactory<Program>
{
    private readonly Dictionary<string, string?> _settings;

    public ServiceFactory(string environment = "Testing", Dictionary<string, string?>? settings = null)
    {
        Environment = environment;
        _settings = settings ?? [];
        DataDirectory = Path.Combine(Path.GetTempPath(), "calbudget-tests", Guid.NewGuid().ToString("N"));
    }

    public string Environment { get; }

    public string DataDirectory { get; }

    protected override void ConfigureWebHost(IWebHostBuilder builder)
    {
        builder.UseEnvironment(Environment);
        builder.UseSetting("CalBudget:DataDirectory", DataDirectory);
        // every test client shares one address on the test server: the abuse limits are tested on their own (RateLimitTests)
        builder.UseSetting("CalBudget:RequestsPer10Seconds", "1000000");
        builder.UseSetting("CalBudget:SignInAttemptsPerMinute", "100000");
        foreach (var (key, value) in _settings)
        {
            builder.UseSetting(key, value);
        }
    }

    public ApiKeyStore Keys => Services.GetRequiredService<ApiKeyStore>();

    /// <summary>A client whose requests carry a new key with <paramref name="role"/>.</summary>
    public async Task<HttpClient> ClientAsync(string role, string? holder = null)
    {
        string key = await Keys.CreateAsync($"{role}-{Guid.NewGuid():N}", role, holder: holder);
        return ClientWithKey(key);
    }

    public HttpClient ClientWithKey(string key)
    {
        var client = CreateClient();
        client.DefaultRequestHeaders.Authorization = new AuthenticationHeaderValue("Bearer", key);
        return client;
    }

    protected override void Dispose(bool disposing)
    {
        base.Dispose(disposing);
        SqliteConnection.ClearAllPools();
        try
        {
            Directory.Delete(DataDirectory, recursive: true);
        }
        catch (IOException)
        {
            // a file still held open is cleaned up with the temp folder
        }
    }
}
