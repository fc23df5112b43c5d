using System.Net;
using CalBudget.Api.Cli;

namespace CalBudget.Api.Tests;

public sealed class CommandLineTests : IDisposable
{
    private readonly string _dir = Path.Combine(Path.GetTempPath(), "calbudget-cli", Guid.NewGuid().ToString("N"));

    public void Dispose()
    {
        Microsoft.Data.Sqlite.SqliteConnection.ClearAllPools();
        if (Directory.Exists(_dir))
        {
            Directory.Delete(_dir, recursive: true);
        }
    }

    private async Task<(int Code, string Out, string Err)> Run(params string[] args)
    {
        var stdout = new StringWriter();
        var stderr = new StringWriter();
        int code = await CommandLine.RunAsync([.. args, $"--CalBudget:DataDirectory={_dir}"], stdout, stderr);
        return (code, stdout.ToString(), stderr.ToString());
    }

    [Fact]
    public async Task CreatePrintsTheKeyAloneOnTheLastLineAndTheServiceAcceptsIt()
    {
        var (code, output, _) = await Run("keys", "create", "--role", "approver", "--name", "bench-pc");
        Assert.Equal(0, code);
        string key = output.TrimEnd().Split('\n').Last().Trim();
        Assert.Matches("^cbk_[0-9a-f]{16}_[A-Za-z0-9_-]{43}$", key);

        using var factory = new ServiceFactory(settings: new() { ["CalBudget:DataDirectory"] = _dir });
        var client = factory.ClientWithKey(key);
        await Json.PostAsync(client, "/api/v1/budgets/evaluate", """{"contributions":[{"name":"a","distribution":"normal","standardUncertainty":1}]}""", HttpStatusCode.OK);
        await Json.ProblemAsync(await client.GetAsync("/api/v1/keys"), HttpStatusCode.Forbidden);
    }

    [Fact]
    public async Task ListShowsNamesAndRolesButNeverAKey()
    {
        var (_, created, _) = await Run("keys", "create", "--role", "auditor", "--name", "assessor");
        string key = created.TrimEnd().Split('\n').Last().Trim();
        var (code, listed, _) = await Run("keys", "list");
        Assert.Equal(0, code);
        Assert.Contains("assessor", listed, StringComparison.Ordinal);
        Assert.Contains("auditor", listed, StringComparison.Ordinal);
        Assert.DoesNotContain(key[21..], listed, StringComparison.Ordinal);
    }

    [Fact]
    public async Task RevokedKeyIsRefusedByTheService()
    {
        var (_, created, _) = await Run("keys", "create", "--role", "technician", "--name", "old-bench");
        string key = created.TrimEnd().Split('\n').Last().Trim();
        Assert.Equal(0, (await Run("keys", "revoke", "old-bench")).Code);
        Assert.Contains("revoked", (await Run("keys", "list")).Out, StringComparison.Ordinal);

        using var factory = new ServiceFactory(settings: new() { ["CalBudget:DataDirectory"] = _dir });
        await Json.ProblemAsync(await factory.ClientWithKey(key).PostAsync("/api/v1/budgets/evaluate",
            Json.Body("""{"contributions":[{"name":"a","distribution":"normal","standardUncertainty":1}]}""")), HttpStatusCode.Unauthorized);
    }

    [Theory]
    [InlineData(2, "keys")]
    [InlineData(2, "keys", "create", "--name", "x")]
    [InlineData(1, "keys", "create", "--role", "boss", "--name", "x")]
    [InlineData(1, "keys", "revoke", "nobody")]
    public async Task MistakesExitNonZeroWithAMessage(int expected, params string[] args)
    {
        var (code, _, error) = await Run(args);
        Assert.Equal(expected, code);
        Assert.False(string.IsNullOrWhiteSpace(error));
    }

    [Fact]
    public async Task DuplicateNamesAreRefused()
    {
        Assert.Equal(0, (await Run("keys", "create", "--role", "admin", "--name", "root")).Code);
        var (code, _, error) = await Run("keys", "create", "--role", "admin", "--name", "root");
        Assert.Equal(1, code);
        Assert.Contains("exists", error, StringComparison.Ordinal);
    }
}
