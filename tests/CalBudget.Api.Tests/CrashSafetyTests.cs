using System.Collections.Concurrent;
using System.Diagnostics;
using System.Globalization;
using System.Net;
using System.Net.Http.Headers;
using System.Security.Cryptography;
using System.Text;
using System.Text.Json.Nodes;
using Microsoft.Data.Sqlite;

namespace CalBudget.Api.Tests;

/// <summary>
/// The real executable as a child process, killed with SIGKILL at random moments while writers record runs, upload
/// readings, build budgets and approve them; after every restart each acknowledged (2xx) write is there and intact,
/// nothing half-written is visible, the audit chain verifies and SQLite's integrity check passes.
/// </summary>
public sealed class CrashSafetyTests : IDisposable
{
    private readonly string _dir = Path.Combine(Path.GetTempPath(), "calbudget-crash", Guid.NewGuid().ToString("N"));

    public void Dispose()
    {
        SqliteConnection.ClearAllPools();
        if (Directory.Exists(_dir))
        {
            Directory.Delete(_dir, recursive: true);
        }
    }

    private Process Start(params string[] args) => ChildService.Start(_dir, args);

    private Task<string> KeyAsync(string role, string name) => ChildService.KeyAsync(_dir, role, name);

    private static int FreePort() => ChildService.FreePort();

    private static Task WaitHealthyAsync(HttpClient client) => ChildService.WaitHealthyAsync(client);

    private static HttpClient Client(int port, string key)
    {
        var client = new HttpClient { BaseAddress = new Uri($"http://127.0.0.1:{port}"), Timeout = TimeSpan.FromSeconds(30) };
        client.DefaultRequestHeaders.Authorization = new AuthenticationHeaderValue("Bearer", key);
        return client;
    }

    private static string Csv(int seed)
    {
        var random = new Random(seed);
        var csv = new StringBuilder("timestamp,fractionalOffset\n");
        for (int k = 0; k < 300; k++)
        {
            csv.Append(CultureInfo.InvariantCulture, $"2026-11-30T09:{k / 60:00}:{k % 60:00}Z,{2e-9 + 3e-12 * (random.NextDouble() - 0.5):R}\n");
        }

        return csv.ToString();
    }

    private sealed record Acknowledged(long Run, string ReadingsSha256, long? Budget, bool Approved);

    [Fact]
    public async Task EveryAcknowledgedWriteSurvivesSigkillAtRandomMoments()
    {
        if (!OperatingSystem.IsLinux())
        {
            return;
        }

        string tech = await KeyAsync("technician", "crash-tech");
        string approver = await KeyAsync("approver", "crash-approver");
        string auditor = await KeyAsync("auditor", "crash-auditor");
        var acknowledged = new ConcurrentBag<Acknowledged>();
        long instrument = 0, reference = 0;
        var random = new Random(20261202);
        for (int round = 0; round < 4; round++)
        {
            int port = FreePort();
            using var server = Start("--urls", $"http://127.0.0.1:{port}");
            try
            {
                using var setup = Client(port, tech);
                await WaitHealthyAsync(setup);
                await VerifyAsync(port, tech, auditor, acknowledged);
                if (round == 0)
                {
                    instrument = (await Json.PostAsync(setup, "/api/v1/instruments", """
                        { "assetNumber": "CB-0990", "customer": "Harbour Test House", "manufacturer": "Vexmoor Electronics", "model": "SA-7",
                          "timebase": { "oscillatorKind": "OCXO", "nominalFrequencyHz": 10000000,
                            "specification": { "agingPerDay": 1e-11, "temperatureCoefficientPerKelvin": 1e-10, "accelerationSensitivityPerG": 1e-9, "retrace": 2e-9 } },
                          "postures": [ { "name": "standing on its feet", "up": "+z" } ] }
                        """, HttpStatusCode.Created))["id"]!.GetValue<long>();
                    reference = (await Json.PostAsync(setup, "/api/v1/references", $$"""
                        { "identity": "RB-CRASH", "kind": "rubidium", "nominalFrequencyHz": 10000000,
                          "calibration": { "certificateNumber": "TL-1", "issuingLab": "Regional time laboratory", "date": "2026-08-20T00:00:00Z",
                                           "fractionalOffset": 1.5e-12, "expandedUncertainty": 2e-12, "coverageFactor": 2 },
                          "dueDate": "{{DateTimeOffset.UtcNow.AddDays(200):O}}" }
                        """, HttpStatusCode.Created))["id"]!.GetValue<long>();
                }

                using var stop = new CancellationTokenSource();
                var writers = Enumerable.Range(0, 3).Select(w => WriteAsync(port, tech, approver, instrument, reference, round * 100 + w, acknowledged, stop.Token)).ToArray();
                await Task.Delay(TimeSpan.FromMilliseconds(700 + random.Next(1500)));
                server.Kill(entireProcessTree: true); // SIGKILL: no shutdown, no checkpoint, no flush of anything not committed
                await server.WaitForExitAsync();
                stop.Cancel();
                await Task.WhenAll(writers);
            }
            finally
            {
                if (!server.HasExited)
                {
                    server.Kill(entireProcessTree: true);
                }
            }
        }

        int last = FreePort();
        using (var final = Start("--urls", $"http://127.0.0.1:{last}"))
        {
            using var client = Client(last, tech);
            await WaitHealthyAsync(client);
            await VerifyAsync(last, tech, auditor, acknowledged);
            final.Kill(entireProcessTree: true);
            await final.WaitForExitAsync();
        }

        Assert.True(acknowledged.Count >= 4, $"only {acknowledged.Count} acknowledged runs: the test proved little");
        Assert.Contains(acknowledged, a => a.Approved);
        SqliteConnection.ClearAllPools();
        using var connection = new SqliteConnection($"Data Source={Path.Combine(_dir, "calbudget.db")}");
        connection.Open();
        using var check = connection.CreateCommand();
        check.CommandText = "PRAGMA integrity_check";
        Assert.Equal("ok", check.ExecuteScalar() as string);
        check.CommandText = "SELECT count(*) FROM reading_uploads WHERE sha256 = ''";
        Assert.Equal(0L, (long)check.ExecuteScalar()!); // no upload half-written
    }

    // One writer: run, readings, budget, approval, each acknowledged step recorded; a dead server ends the loop.
    private static async Task WriteAsync(int port, string tech, string approver, long instrument, long reference, int seed, ConcurrentBag<Acknowledged> acknowledged, CancellationToken stop)
    {
        using var client = Client(port, tech);
        using var approving = Client(port, approver);
        try
        {
            for (int i = 0; !stop.IsCancellationRequested; i++)
            {
                var run = await client.PostAsync("/api/v1/calibrations", Json.Body(LabRecords.RunBody(instrument, reference)), stop);
                if (run.StatusCode != HttpStatusCode.Created)
                {
                    Assert.NotEqual(HttpStatusCode.InternalServerError, run.StatusCode);
                    return;
                }

                long runId = JsonNode.Parse(await run.Content.ReadAsStringAsync(stop))!["id"]!.GetValue<long>();
                string csv = Csv(seed * 1000 + i);
                var upload = await client.PostAsync($"/api/v1/calibrations/{runId}/readings", new StringContent(csv, Encoding.UTF8, "text/csv"), stop);
                if (upload.StatusCode != HttpStatusCode.Created)
                {
                    return;
                }

                string sha = Convert.ToHexStringLower(SHA256.HashData(Encoding.UTF8.GetBytes(csv)));
                acknowledged.Add(new Acknowledged(runId, sha, null, false));
                var budget = await client.PostAsync("/api/v1/budgets", Json.Body($$"""{ "runId": {{runId}}, "templateId": "ocxo-counter", "posturePolicy": { "kind": "as-calibrated" } }"""), stop);
                if (budget.StatusCode != HttpStatusCode.Created)
                {
                    return;
                }

                long budgetId = JsonNode.Parse(await budget.Content.ReadAsStringAsync(stop))!["id"]!.GetValue<long>();
                acknowledged.Add(new Acknowledged(runId, sha, budgetId, false));
                var approve = await approving.PostAsync($"/api/v1/budgets/{budgetId}/versions/1/approve", Json.Body("{}"), stop);
                if (approve.StatusCode == HttpStatusCode.OK)
                {
                    acknowledged.Add(new Acknowledged(runId, sha, budgetId, true));
                }
            }
        }
        catch (Exception ex) when (ex is HttpRequestException or TaskCanceledException or OperationCanceledException or IOException)
        {
            // the server died under the request: it was not acknowledged
        }
    }

    private static async Task VerifyAsync(int port, string key, string auditor, ConcurrentBag<Acknowledged> acknowledged)
    {
        using var client = Client(port, key);
        foreach (var a in acknowledged)
        {
            var readings = await Json.ReadAsync(await client.GetAsync($"/api/v1/calibrations/{a.Run}/readings/uploads"), HttpStatusCode.OK);
            Assert.Contains(readings.AsArray(), u => u!["sha256"]!.GetValue<string>() == a.ReadingsSha256);
            if (a.Budget is { } budget)
            {
                var version = await Json.ReadAsync(await client.GetAsync($"/api/v1/budgets/{budget}/versions/1"), HttpStatusCode.OK);
                if (a.Approved)
                {
                    Assert.Equal("approved", version["state"]!.GetValue<string>());
                }
            }
        }

        using var audit = Client(port, auditor);
        var verify = await Json.ReadAsync(await audit.GetAsync("/api/v1/audit/verify"), HttpStatusCode.OK);
        Assert.True(verify["intact"]!.GetValue<bool>(), verify.ToJsonString());
    }
}
