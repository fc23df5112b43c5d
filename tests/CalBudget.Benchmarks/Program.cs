using System.Diagnostics;
using BenchmarkDotNet.Running;
using CalBudget.Core.Stability;

// dotnet run -c Release --project tests/CalBudget.Benchmarks -- --filter '*'
// dotnet run -c Release --project tests/CalBudget.Benchmarks -- stability-memory 10000000
if (args is ["stability-memory", var count])
{
    // All seven statistics at octave factors on N white-FM readings; prints the time and the process's peak working set.
    int n = int.Parse(count, System.Globalization.CultureInfo.InvariantCulture);
    var random = new Random(1);
    var y = new double[n];
    for (int i = 0; i < n; i++)
    {
        y[i] = 1e-11 * Math.Sqrt(-2 * Math.Log(1 - random.NextDouble())) * Math.Cos(2 * Math.PI * random.NextDouble());
    }

    var watch = Stopwatch.StartNew();
    var result = StabilityAnalysis.Analyse(y, StabilityDataType.Frequency, 1.0, Enum.GetValues<StabilityStatistic>());
    Console.WriteLine($"N = {n}: {watch.Elapsed.TotalSeconds:F2} s, {result.Results.Values.Sum(v => v.Count)} points, " +
        $"peak working set {Process.GetCurrentProcess().PeakWorkingSet64 / 1048576} MiB (the readings alone {n * 8L / 1048576} MiB)");
    return;
}

// dotnet run -c Release --project tests/CalBudget.Benchmarks -- audit-verify 1000000
if (args is ["audit-verify", var entries])
{
    // Fills a new database's audit trail with N chained entries (a small state each), then verifies it three times; prints
    // the times and the peak working set (constant memory: the trail is streamed, not loaded).
    int n = int.Parse(entries, System.Globalization.CultureInfo.InvariantCulture);
    string folder = Path.Combine(Path.GetTempPath(), "calbudget-audit-" + Guid.NewGuid().ToString("N"));
    try
    {
        var database = new CalBudget.Data.SqliteDatabase(folder);
        await CalBudget.Data.Schema.Migrator.MigrateAsync(database);
        var fill = Stopwatch.StartNew();
        await using (var connection = await database.OpenAsync())
        {
            await using var tx = await connection.BeginTransactionAsync();
            await using var insert = connection.CreateCommand();
            insert.Transaction = tx;
            insert.CommandText = "INSERT INTO audit_entries (seq, at, actor, action, entity_type, entity_id, reason, state, state_sha256, previous_sha256, entry_sha256) VALUES ($seq, $at, 'load', 'update', 'instrument', $id, NULL, $state, $stateHash, $previous, $hash)";
            var p = new[] { "$seq", "$at", "$id", "$state", "$stateHash", "$previous", "$hash" }.Select(name =>
            {
                var x = insert.CreateParameter();
                x.ParameterName = name;
                insert.Parameters.Add(x);
                return x;
            }).ToArray();
            string previous = CalBudget.Data.Audit.AuditLog.Genesis;
            var start = new DateTimeOffset(2026, 1, 1, 0, 0, 0, TimeSpan.Zero);
            for (long seq = 1; seq <= n; seq++)
            {
                string at = CalBudget.Data.Timestamps.Format(start.AddSeconds(seq));
                string id = (seq % 1000).ToString(System.Globalization.CultureInfo.InvariantCulture);
                string state = "{\"id\":" + id + ",\"assetNumber\":\"L-" + id + "\",\"version\":" + seq + ",\"customer\":\"load test\",\"notes\":\"an ordinary update\"}";
                string stateHash = CalBudget.Data.Audit.AuditLog.Sha256(state);
                string hash = CalBudget.Data.Audit.AuditLog.EntryHash(previous, seq, at, "load", "update", "instrument", id, null, stateHash);
                (p[0].Value, p[1].Value, p[2].Value, p[3].Value, p[4].Value, p[5].Value, p[6].Value) = (seq, at, id, state, stateHash, previous, hash);
                await insert.ExecuteNonQueryAsync();
                previous = hash;
            }

            await tx.CommitAsync();
        }

        Console.WriteLine($"filled {n} entries in {fill.Elapsed.TotalSeconds:F1} s; peak working set so far {Process.GetCurrentProcess().PeakWorkingSet64 / 1048576} MiB");
        var log = new CalBudget.Data.Audit.AuditLog(database);
        for (int run = 1; run <= 3; run++)
        {
            var watch = Stopwatch.StartNew();
            var result = await log.VerifyAsync();
            Console.WriteLine($"verify {run}: {result.Entries} entries, intact {result.Intact}, {watch.Elapsed.TotalSeconds:F2} s, peak working set {Process.GetCurrentProcess().PeakWorkingSet64 / 1048576} MiB");
        }
    }
    finally
    {
        Microsoft.Data.Sqlite.SqliteConnection.ClearAllPools();
        Directory.Delete(folder, recursive: true);
    }

    return;
}

// results go beside the build output, not into the repository's top folder
BenchmarkSwitcher.FromAssembly(typeof(Program).Assembly).Run(args,
    BenchmarkDotNet.Configs.ConfigExtensions.WithArtifactsPath(BenchmarkDotNet.Configs.DefaultConfig.Instance, Path.Combine(AppContext.BaseDirectory, "BenchmarkDotNet.Artifacts")));
