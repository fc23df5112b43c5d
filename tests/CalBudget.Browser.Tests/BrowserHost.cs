using CalBudget.Api.Auth;
using Microsoft.AspNetCore.Hosting;
using Microsoft.AspNetCore.Hosting.Server;
using Microsoft.AspNetCore.Hosting.Server.Features;
using Microsoft.AspNetCore.Mvc.Testing;
using Microsoft.Data.Sqlite;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Playwright;

namespace CalBudget.Browser.Tests;

/// <summary>
/// The real host on Kestrel at a loopback port with a database of its own, three staff accounts, and Debian's chromium
/// driven by Playwright (headless, the flags below). One per test class.
/// </summary>
public sealed class BrowserHost : WebApplicationFactory<Program>, IAsyncLifetime
{
    /// <summary>Where Debian's chromium package puts the browser.</summary>
    public const string Chromium = "/usr/bin/chromium";

    /// <summary>The accounts: name, role, password.</summary>
    public static readonly (string Name, string Role, string Password)[] Staff =
    [
        ("kim.technician", "technician", "a long technician password"),
        ("ola.approver", "approver", "a long approver password"),
        ("sam.auditor", "auditor", "a long auditor password"),
    ];

    private readonly string _data = Path.Combine(Path.GetTempPath(), "calbudget-browser", Guid.NewGuid().ToString("N"));
    private IPlaywright? _playwright;

    /// <summary>The browser.</summary>
    public IBrowser Browser { get; private set; } = null!;

    /// <summary>The host's address, e.g. http://127.0.0.1:40123.</summary>
    public Uri Address { get; private set; } = null!;

    /// <summary>Screenshots of the main pages are saved here (a test artifact).</summary>
    public static string Screenshots { get; } = Path.Combine(AppContext.BaseDirectory, "screenshots");

    protected override void ConfigureWebHost(IWebHostBuilder builder)
    {
        builder.UseEnvironment("Testing");
        builder.UseSetting("CalBudget:DataDirectory", _data);
    }

    public async Task InitializeAsync()
    {
        Assert.True(File.Exists(Chromium), $"{Chromium} is missing: tests/run.sh installs Debian's chromium package (apt-get install chromium).");
        UseKestrel(0);
        StartServer();
        Address = new Uri(Services.GetRequiredService<IServer>().Features.Get<IServerAddressesFeature>()!.Addresses.First().Replace("localhost", "127.0.0.1", StringComparison.Ordinal));
        var accounts = Services.GetRequiredService<UserAccounts>();
        foreach (var (name, role, password) in Staff)
        {
            await accounts.CreateAsync(name, role, password);
        }

        _playwright = await Playwright.CreateAsync();
        Browser = await _playwright.Chromium.LaunchAsync(new BrowserTypeLaunchOptions
        {
            ExecutablePath = Chromium,
            Headless = true,
            Args = ["--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run", "--disable-background-networking", "--disable-component-update", "--disable-sync"],
        });
        Directory.CreateDirectory(Screenshots);
    }

    async Task IAsyncLifetime.DisposeAsync()
    {
        if (Browser is not null)
        {
            await Browser.CloseAsync();
        }

        _playwright?.Dispose();
        await base.DisposeAsync();
        SqliteConnection.ClearAllPools();
        try
        {
            Directory.Delete(_data, recursive: true);
        }
        catch (IOException)
        {
            // a file still held open by a finishing request; the temp folder is cleaned by the system
        }
    }
}
