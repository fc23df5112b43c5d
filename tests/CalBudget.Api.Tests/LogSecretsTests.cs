using System.Collections.Concurrent;
using System.Net;
using System.Text.RegularExpressions;
using CalBudget.Api.Auth;
using Microsoft.AspNetCore.Hosting;
using Microsoft.AspNetCore.Mvc.Testing;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Logging;

namespace CalBudget.Api.Tests;

/// <summary>
/// No key, password or cookie in any log line: every category at Debug is captured (messages, their state values and
/// scopes) while keys are used, refused and revoked, people sign in and browse, and the captured text is searched.
/// </summary>
public sealed partial class LogSecretsTests : IDisposable
{
    private readonly Capture _capture = new();
    private readonly WebApplicationFactory<Program> _factory;
    private readonly ServiceFactory _inner = new(settings: new()
    {
        ["Logging:LogLevel:Default"] = "Debug",
        ["Logging:LogLevel:Microsoft"] = "Debug",
        ["Logging:LogLevel:Microsoft.AspNetCore"] = "Debug",
        ["Logging:LogLevel:Microsoft.AspNetCore.Hosting.Diagnostics"] = "Debug",
    });

    public LogSecretsTests() => _factory = _inner.WithWebHostBuilder(b => b.ConfigureLogging(l => l.SetMinimumLevel(LogLevel.Debug).AddProvider(_capture)));

    public void Dispose()
    {
        _factory.Dispose();
        _inner.Dispose();
    }

    [GeneratedRegex("name=\"__RequestVerificationToken\" value=\"([^\"]+)\"")]
    private static partial Regex TokenPattern();

    [Fact]
    public async Task KeysPasswordsAndCookiesNeverReachTheLogs()
    {
        var keys = _factory.Services.GetRequiredService<CalBudget.Data.Keys.ApiKeyStore>();
        string key = await keys.CreateAsync("logged-key", "technician");
        var client = _factory.CreateClient();
        client.DefaultRequestHeaders.Authorization = new("Bearer", key);
        Assert.Equal(HttpStatusCode.OK, (await client.GetAsync("/api/v1/instruments")).StatusCode);
        string wrong = key[..^4] + "AAAA";
        var bad = _factory.CreateClient();
        bad.DefaultRequestHeaders.Authorization = new("Bearer", wrong);
        Assert.Equal(HttpStatusCode.Unauthorized, (await bad.GetAsync("/api/v1/instruments")).StatusCode);

        const string password = "an unguessable staff password";
        await _factory.Services.GetRequiredService<UserAccounts>().CreateAsync("logged.person", "technician", password);
        var browser = _factory.CreateClient(new WebApplicationFactoryClientOptions { AllowAutoRedirect = false });
        string token = TokenPattern().Match(await browser.GetStringAsync("/sign-in")).Groups[1].Value;
        await browser.PostAsync("/sign-in", new FormUrlEncodedContent(new Dictionary<string, string> { ["__RequestVerificationToken"] = token, ["name"] = "logged.person", ["password"] = "wrong " + password }));
        token = TokenPattern().Match(await browser.GetStringAsync("/sign-in")).Groups[1].Value;
        var signedIn = await browser.PostAsync("/sign-in", new FormUrlEncodedContent(new Dictionary<string, string> { ["__RequestVerificationToken"] = token, ["name"] = "logged.person", ["password"] = password }));
        string cookie = signedIn.Headers.GetValues("Set-Cookie").First(c => c.StartsWith("calbudget.staff=", StringComparison.Ordinal)).Split(';')[0]["calbudget.staff=".Length..];
        Assert.Equal(HttpStatusCode.OK, (await browser.GetAsync("/instruments")).StatusCode);
        await keys.RevokeAsync("logged-key");

        string logs = string.Join("\n", _capture.Lines);
        Assert.True(_capture.Lines.Count > 20, $"only {_capture.Lines.Count} lines captured");
        string secret = key[(key.LastIndexOf('_') + 1)..];
        Assert.DoesNotContain(secret, logs, StringComparison.Ordinal);
        Assert.DoesNotContain(wrong[(wrong.LastIndexOf('_') + 1)..], logs, StringComparison.Ordinal);
        Assert.DoesNotContain(password, logs, StringComparison.Ordinal);
        Assert.DoesNotContain(cookie[..Math.Min(40, cookie.Length)], logs, StringComparison.Ordinal);
        Assert.DoesNotContain(token[..Math.Min(40, token.Length)], logs, StringComparison.Ordinal);
    }

    private sealed class Capture : ILoggerProvider
    {
        public ConcurrentQueue<string> Queue { get; } = new();

        public ConcurrentQueue<string> Lines => Queue;

        public ILogger CreateLogger(string categoryName) => new Logger(this, categoryName);

        public void Dispose()
        {
        }

        private sealed class Logger(Capture capture, string category) : ILogger, IDisposable
        {
            public IDisposable BeginScope<TState>(TState state) where TState : notnull
            {
                capture.Queue.Enqueue($"{category} scope {Describe(state)}");
                return this;
            }

            public bool IsEnabled(LogLevel logLevel) => true;

            public void Log<TState>(LogLevel logLevel, EventId eventId, TState state, Exception? exception, Func<TState, Exception?, string> formatter) =>
                capture.Queue.Enqueue($"{category} {formatter(state, exception)} {Describe(state)} {exception}");

            public void Dispose()
            {
            }

            private static string Describe(object? state) => state is IEnumerable<KeyValuePair<string, object?>> pairs
                ? string.Join(" ", pairs.Select(p => $"{p.Key}={p.Value}"))
                : state?.ToString() ?? "";
        }
    }
}
