using Microsoft.Data.Sqlite;

namespace CalBudget.Api.Tests;

/// <summary>A temporary folder for a test's own database, removed (after SQLite's pooled connections let go) on dispose.</summary>
public sealed class TempFolder(string prefix) : IDisposable
{
    /// <summary>The folder's full path.</summary>
    public string Path { get; } = Directory.CreateTempSubdirectory(prefix).FullName;

    public void Dispose()
    {
        SqliteConnection.ClearAllPools();
        Directory.Delete(Path, recursive: true);
    }
}
