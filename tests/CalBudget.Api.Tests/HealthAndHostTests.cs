using System.Net;
using CalBudget.Data;
using Dapper;
using Microsoft.Extensions.DependencyInjection;

namespace CalBudget.Api.Tests;

public sealed class HealthAndHostTests : IDisposable
{
    private readonly ServiceFactory _factory = new();

    public void Dispose() => _factory.Dispose();

    [Fact]
    public async Task HealthAnswersWithoutAKeyWhenTheDatabaseAnswers()
    {
        var node = await Json.ReadAsync(await _factory.CreateClient().GetAsync("/health"), HttpStatusCode.OK);
        Assert.Equal("ok", node["status"]!.GetValue<string>());
    }

    [Fact]
    public async Task TheDataDirectoryAndDatabaseFileAreCreatedOnStart()
    {
        _ = _factory.CreateClient();
        Assert.True(File.Exists(Path.Combine(_factory.DataDirectory, SqliteDatabase.FileName)));
    }

    [Fact]
    public async Task ConnectionsUseWriteAheadLoggingFullSyncForeignKeysAndABusyTimeout()
    {
        _ = _factory.CreateClient();
        await using var connection = await _factory.Services.GetRequiredService<IDbConnectionFactory>().OpenAsync();
        Assert.Equal("wal", await connection.ExecuteScalarAsync<string>("PRAGMA journal_mode"));
        Assert.Equal(2, await connection.ExecuteScalarAsync<long>("PRAGMA synchronous")); // 2 = FULL
        Assert.Equal(1, await connection.ExecuteScalarAsync<long>("PRAGMA foreign_keys"));
        Assert.True(await connection.ExecuteScalarAsync<long>("PRAGMA busy_timeout") >= 5000);
    }

    [Fact]
    public async Task MigrationsAreJournaledAndAppliedOnce()
    {
        _ = _factory.CreateClient();
        var database = _factory.Services.GetRequiredService<SqliteDatabase>();
        var again = await CalBudget.Data.Schema.Migrator.MigrateAsync(database);
        Assert.Empty(again.AppliedScripts);
        Assert.False(again.CreatedNew);
        await using var connection = await database.OpenAsync();
        var journaled = (await connection.QueryAsync<string>("SELECT ScriptName FROM SchemaVersions")).ToArray();
        Assert.Equal(CalBudget.Data.Schema.Migrator.ScriptNames.Count, journaled.Length);
    }

    [Fact]
    public async Task UnknownPathsAnswer404AsProblemDetails()
    {
        var client = await _factory.ClientAsync("technician");
        await Json.ProblemAsync(await client.GetAsync("/api/v1/nothing-here"), HttpStatusCode.NotFound);
    }

    [Fact]
    public async Task WrongMethodAnswers405AsProblemDetails()
    {
        await Json.ProblemAsync(await _factory.CreateClient().DeleteAsync("/health"), HttpStatusCode.MethodNotAllowed);
    }

    [Fact]
    public async Task EveryAnswerCarriesARequestId()
    {
        using var response = await _factory.CreateClient().GetAsync("/health");
        Assert.True(response.Headers.Contains("X-Request-Id"));
    }
}
