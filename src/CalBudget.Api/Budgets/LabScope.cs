using System.Globalization;
using System.Text.Json;
using CalBudget.Core.Gum;

namespace CalBudget.Api.Budgets;

/// <summary>One calibration and measurement capability (CMC) of the lab's scope.</summary>
/// <param name="Id">Its id.</param>
/// <param name="Quantity">The measurand, in words.</param>
/// <param name="OscillatorKinds">The timebase kinds it covers.</param>
/// <param name="NominalMinHz">Lowest nominal frequency covered, Hz.</param>
/// <param name="NominalMaxHz">Highest, Hz.</param>
/// <param name="OffsetMin">Lowest fractional offset covered.</param>
/// <param name="OffsetMax">Highest.</param>
/// <param name="ExpandedUncertainty">The CMC as an expanded uncertainty.</param>
/// <param name="CoverageFactor">Its k.</param>
/// <param name="Conditions">The conditions it holds for, in words.</param>
public sealed record Capability(string Id, string Quantity, IReadOnlyList<string> OscillatorKinds, double NominalMinHz, double NominalMaxHz, double OffsetMin,
    double OffsetMax, double ExpandedUncertainty, double CoverageFactor, string Conditions)
{
    /// <summary>Whether it covers a result of <paramref name="offset"/> for a timebase of <paramref name="kind"/> at <paramref name="nominalHz"/>.</summary>
    public bool Covers(string kind, double nominalHz, double offset) =>
        OscillatorKinds.Contains(kind) && nominalHz >= NominalMinHz && nominalHz <= NominalMaxHz && offset >= OffsetMin && offset <= OffsetMax;

    /// <summary>The capability in words for a budget's record and a certificate.</summary>
    public string Words => string.Create(CultureInfo.InvariantCulture,
        $"CMC {Id}: {Quantity} of {string.Join(", ", OscillatorKinds)} timebases at {Notation.Frequency(NominalMinHz)} to {Notation.Frequency(NominalMaxHz)}, offsets {Notation.Value(OffsetMin)} to {Notation.Value(OffsetMax)}, U = {Notation.Uncertainty(ExpandedUncertainty)} (k = {CoverageFactor:G3}); {Conditions}");
}

/// <summary>
/// The lab's scope: its calibration and measurement capabilities, read from templates/scope.json at start (a bad file
/// stops the start, naming the field; no file means no declared scope, so every result is outside it). A calibration
/// result's U is never stated below the CMC that covers it (ILAC-P14); a result no capability covers is stated as
/// outside the scope.
/// </summary>
public sealed class LabScope
{
    private LabScope(string title, IReadOnlyList<Capability> capabilities)
    {
        Title = title;
        Capabilities = capabilities;
    }

    /// <summary>The scope's title.</summary>
    public string Title { get; }

    /// <summary>Every capability.</summary>
    public IReadOnlyList<Capability> Capabilities { get; }

    /// <summary>The first capability covering the result, or null.</summary>
    public Capability? Covering(string kind, double nominalHz, double offset) => Capabilities.FirstOrDefault(c => c.Covers(kind, nominalHz, offset));

    /// <summary>Reads <c>scope.json</c> of <paramref name="directory"/>; throws <see cref="TemplateException"/> naming the field.</summary>
    public static LabScope Load(string directory)
    {
        string path = Path.Combine(directory, TemplateCatalog.ScopeFile);
        return File.Exists(path) ? Read(File.ReadAllBytes(path)) : new LabScope("no scope declared", []);
    }

    /// <summary>Reads a scope file's bytes.</summary>
    public static LabScope Read(byte[] bytes)
    {
        const string file = TemplateCatalog.ScopeFile;
        var root = TemplateCatalog.Parse(file, bytes);

        string title = root.ValueKind == JsonValueKind.Object && root.TryGetProperty("title", out var t) && t.ValueKind == JsonValueKind.String ? t.GetString()! : "scope";
        if (root.ValueKind != JsonValueKind.Object || !root.TryGetProperty("capabilities", out var list) || list.ValueKind != JsonValueKind.Array)
        {
            throw new TemplateException(file, "capabilities", "Required: an array of capabilities.");
        }

        var capabilities = new List<Capability>();
        int i = 0;
        foreach (var c in list.EnumerateArray())
        {
            string at = $"capabilities[{i++}]";
            string Text(string name) => c.TryGetProperty(name, out var v) && v.ValueKind == JsonValueKind.String && !string.IsNullOrWhiteSpace(v.GetString())
                ? v.GetString()! : throw new TemplateException(file, $"{at}.{name}", "Required: a non-empty string.");
            double Number(JsonElement o, string name, string path, bool positive) =>
                o.TryGetProperty(name, out var v) && v.ValueKind == JsonValueKind.Number && v.TryGetDouble(out double d) && double.IsFinite(d) && (!positive || d > 0)
                    ? d : throw new TemplateException(file, path, positive ? "Required: a number > 0." : "Required: a number.");
            (double Min, double Max) Range(string name)
            {
                if (!c.TryGetProperty(name, out var r) || r.ValueKind != JsonValueKind.Object)
                {
                    throw new TemplateException(file, $"{at}.{name}", "Required: { \"min\", \"max\" }.");
                }

                double min = Number(r, "min", $"{at}.{name}.min", false), max = Number(r, "max", $"{at}.{name}.max", false);
                return min <= max ? (min, max) : throw new TemplateException(file, $"{at}.{name}", "min must not exceed max.");
            }

            var kinds = c.TryGetProperty("oscillatorKinds", out var k) && k.ValueKind == JsonValueKind.Array && k.GetArrayLength() > 0
                ? k.EnumerateArray().Select((e, j) => e.ValueKind == JsonValueKind.String && Data.Instruments.OscillatorKinds.All.Contains(e.GetString()!)
                    ? e.GetString()! : throw new TemplateException(file, $"{at}.oscillatorKinds[{j}]", $"One of {string.Join(", ", Data.Instruments.OscillatorKinds.All)}.")).ToArray()
                : throw new TemplateException(file, $"{at}.oscillatorKinds", "Required: the timebase kinds covered.");
            var nominal = Range("nominalFrequencyHz");
            var offset = Range("fractionalOffset");
            capabilities.Add(new Capability(Text("id"), Text("quantity"), kinds, nominal.Min, nominal.Max, offset.Min, offset.Max,
                Number(c, "expandedUncertainty", $"{at}.expandedUncertainty", true), Number(c, "coverageFactor", $"{at}.coverageFactor", true), Text("conditions")));
        }

        return new LabScope(title, capabilities);
    }
}
