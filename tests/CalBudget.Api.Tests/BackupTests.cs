using System.Net;
using CalBudget.Api.Cli;

namespace CalBudget.Api.Tests;

/// <summary>
/// backup create / backup restore on the command line: a backup taken while the service runs holds exactly what was
/// acknowledged before it; a restore brings back exactly that state, with the audit chain valid; a damaged or foreign
/// file is refused before anything is replaced.
/// </summary>
public sealed class BackupTests : IDisposable
{
    private readonly ServiceFactory _factory = new();
    private readonly string _folder = Directory.CreateTempSubdirectory("calbudget-backup-").FullName;

    public void Dispose()
    {
        _factory.Dispose();
        Directory.Delete(_folder, recursive: true);
    }

    private async Task<(int Code, string Out, string Err)> CliAsync(params string[] args)
    {
        using var stdout = new StringWriter();
        using var stderr = new StringWriter();
        int code = await CommandLine.RunAsync([.. args, $"--CalBudget:DataDirectory={_factory.DataDirectory}"], stdout, stderr);
        return (code, stdout.ToString(), stderr.ToString());
    }

    private static string Instrument(string asset) => LabRecords.PlainInstrumentBody(asset, "Calder Rail Signalling");

    [Fact]
    public async Task ARestoreBringsBackExactlyTheBackedUpStateWithAValidAuditTrail()
    {
        var tech = await _factory.ClientAsync("technician");
        var auditor = await _factory.ClientAsync("auditor");
        await Json.PostAsync(tech, "/api/v1/instruments", Instrument("CB-0700"), HttpStatusCode.Created);
        long entriesAtBackup = (await Json.ReadAsync(await auditor.GetAsync("/api/v1/audit/verify"), HttpStatusCode.OK))["entries"]!.GetValue<long>();

        string file = Path.Combine(_folder, "nightly.db");
        var (code, output, _) = await CliAsync("backup", "create", file); // the service is running
        Assert.Equal(0, code);
        Assert.Contains($"audit trail of {entriesAtBackup} entries verified", output, StringComparison.Ordinal);
        Assert.Equal(1, (await CliAsync("backup", "create", file)).Code); // never overwrites

        await Json.PostAsync(tech, "/api/v1/instruments", Instrument("CB-0701"), HttpStatusCode.Created);
        var (restored, restoreOut, restoreErr) = await CliAsync("backup", "restore", file);
        Assert.True(restored == 0, restoreErr);
        Assert.Contains("before-restore-", restoreOut, StringComparison.Ordinal);

        var list = await Json.ReadAsync(await tech.GetAsync("/api/v1/instruments?limit=200"), HttpStatusCode.OK);
        var assets = list["items"]!.AsArray().Select(i => i!["assetNumber"]!.GetValue<string>()).ToArray();
        Assert.Contains("CB-0700", assets);
        Assert.DoesNotContain("CB-0701", assets);
        var verify = await Json.ReadAsync(await auditor.GetAsync("/api/v1/audit/verify"), HttpStatusCode.OK);
        Assert.True(verify["intact"]!.GetValue<bool>());
        Assert.Equal(entriesAtBackup, verify["entries"]!.GetValue<long>());
    }

    [Theory]
    [InlineData("not a database at all")]
    [InlineData("")]
    public async Task ADamagedOrForeignFileIsRefusedBeforeAnythingIsReplaced(string content)
    {
        var tech = await _factory.ClientAsync("technician");
        await Json.PostAsync(tech, "/api/v1/instruments", Instrument("CB-0702"), HttpStatusCode.Created);
        string file = Path.Combine(_folder, "damaged.db");
        await File.WriteAllTextAsync(file, content);
        var (code, _, error) = await CliAsync("backup", "restore", file);
        Assert.Equal(1, code);
        Assert.Contains(file, error, StringComparison.Ordinal);
        var list = await Json.ReadAsync(await tech.GetAsync("/api/v1/instruments"), HttpStatusCode.OK);
        Assert.Contains(list["items"]!.AsArray(), i => i!["assetNumber"]!.GetValue<string>() == "CB-0702");
        Assert.Equal(2, (await CliAsync("backup")).Code);
    }
}
