using System.Diagnostics;
using System.Net;
using System.Net.Http.Headers;

namespace CalBudget.Api.Tests;

/// <summary>The real executable as a child process on a loopback port: SIGTERM lets a request in flight finish.</summary>
public sealed class GracefulShutdownTests : IDisposable
{
    private readonly string _dir = Path.Combine(Path.GetTempPath(), "calbudget-shutdown", Guid.NewGuid().ToString("N"));

    public void Dispose()
    {
        Microsoft.Data.Sqlite.SqliteConnection.ClearAllPools();
        if (Directory.Exists(_dir))
        {
            Directory.Delete(_dir, recursive: true);
        }
    }

    private Process Start(params string[] args) => ChildService.Start(_dir, args);

    private static class Native
    {
        public const int SigTerm = 15;

        // kill(2) from the C library: the same signal a service manager sends, with no command-line tool needed.
        [System.Runtime.InteropServices.DllImport("libc", EntryPoint = "kill", SetLastError = true)]
        public static extern int Kill(int pid, int signal);
    }

    private static int FreePort() => ChildService.FreePort();

    [Fact]
    public async Task SigtermLetsARequestInFlightFinishAndExitsCleanly()
    {
        if (!OperatingSystem.IsLinux())
        {
            return; // SIGTERM semantics are what is tested
        }

        string key;
        using (var keys = Start("keys", "create", "--role", "integration", "--name", "shutdown"))
        {
            string output = await keys.StandardOutput.ReadToEndAsync();
            await keys.WaitForExitAsync();
            Assert.Equal(0, keys.ExitCode);
            key = output.TrimEnd().Split('\n')[^1].Trim();
        }

        int port = FreePort();
        using var server = Start("--urls", $"http://127.0.0.1:{port}");
        try
        {
            using var client = new HttpClient { BaseAddress = new Uri($"http://127.0.0.1:{port}"), Timeout = TimeSpan.FromSeconds(60) };
            await ChildService.WaitHealthyAsync(client);

            // Seconds of Monte Carlo work: 10 million trials of six Student's t inputs.
            string inputs = string.Join(",", Enumerable.Range(0, 6).Select(i => $$"""{"name":"t{{i}}","distribution":"student-t","standardUncertainty":1,"degreesOfFreedom":3}"""));
            var request = new HttpRequestMessage(HttpMethod.Post, "/api/v1/budgets/evaluate")
            {
                Content = Json.Body($$$"""{"contributions":[{{{inputs}}}],"monteCarlo":{"trials":10000000,"seed":1}}"""),
            };
            request.Headers.Authorization = new AuthenticationHeaderValue("Bearer", key);
            var inFlight = client.SendAsync(request);
            await Task.Delay(300);
            Assert.False(inFlight.IsCompleted, "the request finished before the signal: the test would prove nothing");
            Assert.Equal(0, Native.Kill(server.Id, Native.SigTerm));

            using var response = await inFlight;
            Assert.Equal(HttpStatusCode.OK, response.StatusCode);
            Assert.Contains("\"trials\":10000000", await response.Content.ReadAsStringAsync(), StringComparison.Ordinal);
            using var exit = new CancellationTokenSource(TimeSpan.FromSeconds(40));
            await server.WaitForExitAsync(exit.Token);
            Assert.Equal(0, server.ExitCode);
        }
        finally
        {
            if (!server.HasExited)
            {
                server.Kill(entireProcessTree: true);
            }
        }
    }
}
