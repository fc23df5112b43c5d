using System.Text.RegularExpressions;

namespace CalBudget.Api.Tests;

/// <summary>Reads the contributor guide (DEVELOPERS.md at the repository's root), so that tests check what it says.</summary>
public static partial class ContributorGuide
{
    /// <summary>The guide's text, found by walking up from the test's folder to the solution file.</summary>
    public static string Text()
    {
        for (var folder = new DirectoryInfo(AppContext.BaseDirectory); folder is not null; folder = folder.Parent)
        {
            if (File.Exists(Path.Combine(folder.FullName, "CalBudget.sln")))
            {
                return File.ReadAllText(Path.Combine(folder.FullName, "DEVELOPERS.md"));
            }
        }

        throw new InvalidOperationException("No CalBudget.sln above " + AppContext.BaseDirectory);
    }

    /// <summary>
    /// The "Roles" section's operations table: for each operation written in a row ("GET /api/v1/budgets/{id}"), the roles
    /// whose cell is not a refusal (401 or 403), or null when the "no key" cell is not a refusal either (open to all).
    /// </summary>
    public static IReadOnlyDictionary<string, string[]?> OperationRoles(IReadOnlyList<string> roles) =>
        Table("| operation |", roles, (cells, header) => Refusal(cells[Column(header, "no key")]));

    /// <summary>
    /// The "Roles" section's pages table: for each page ("GET /instruments/{id}"), the roles whose cell is "yes", or null
    /// when every cell is "open" (no sign-in needed).
    /// </summary>
    public static IReadOnlyDictionary<string, string[]?> PageRoles(IReadOnlyList<string> roles) =>
        Table("| page |", roles, (cells, _) => cells.Skip(1).Any(c => c != "open"));

    private static int Column(string[] header, string name) =>
        Array.IndexOf(header, name) is int i and >= 0 ? i : throw new InvalidOperationException($"The roles table has no \"{name}\" column");

    // The table under "### Roles" whose header starts with headerStart: operation to the roles not refused, or null when
    // the row is open to all (restricted says whether it is not).
    private static Dictionary<string, string[]?> Table(string headerStart, IReadOnlyList<string> roles, Func<string[], string[], bool> restricted)
    {
        string text = Text();
        int section = text.IndexOf("### Roles", StringComparison.Ordinal);
        if (section < 0)
        {
            throw new InvalidOperationException("DEVELOPERS.md has no \"### Roles\" section");
        }

        var lines = text[section..].Split('\n').Select(l => l.Trim()).SkipWhile(l => !l.StartsWith(headerStart, StringComparison.Ordinal))
            .TakeWhile(l => l.StartsWith('|')).ToArray();
        if (lines.Length < 3)
        {
            throw new InvalidOperationException($"DEVELOPERS.md has no table starting \"{headerStart}\" under \"### Roles\"");
        }

        var header = Cells(lines[0]);
        int[] columns = [.. roles.Select(r => Column(header, r))];

        var table = new Dictionary<string, string[]?>(StringComparer.Ordinal);
        foreach (string line in lines.Skip(2))
        {
            var cells = Cells(line);
            var operations = Operation().Matches(cells[0]).Select(m => m.Groups[1].Value).ToArray();
            if (operations.Length == 0)
            {
                throw new InvalidOperationException("A row of the roles table names no operation: " + line);
            }

            string[]? allowed = restricted(cells, header) ? [.. roles.Where((_, i) => !Refusal(cells[columns[i]]))] : null;
            foreach (string operation in operations)
            {
                if (!table.TryAdd(operation, allowed))
                {
                    throw new InvalidOperationException($"{operation} has two rows in the table starting \"{headerStart}\"");
                }
            }
        }

        return table;
    }

    private static bool Refusal(string cell) => cell is "401" or "403";

    private static string[] Cells(string line) => [.. line.Trim('|').Split('|').Select(c => c.Trim())];

    [GeneratedRegex(@"`((?:GET|POST|PUT|PATCH|DELETE) /[^`]*)`")]
    private static partial Regex Operation();
}
