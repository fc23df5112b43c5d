using System.Globalization;
using System.Text.Json;
using System.Text.RegularExpressions;
using CalBudget.Core.Budgets;
using CalBudget.Core.Gum;
using CalBudget.Data.Instruments;

namespace CalBudget.Api.Budgets;

/// <summary>A template file that cannot be used: which file, which field, why. The service does not start with one.</summary>
/// <param name="file">The file name.</param>
/// <param name="field">The JSON path of the field.</param>
/// <param name="message">What is wrong.</param>
public sealed class TemplateException(string file, string field, string message) : Exception($"Budget template {file}: {field}: {message}")
{
    /// <summary>The file.</summary>
    public string File { get; } = file;

    /// <summary>The field.</summary>
    public string Field { get; } = field;
}

/// <summary>A budget template as read and checked.</summary>
/// <param name="Id">Its id (the file name).</param>
/// <param name="Version">Its version.</param>
/// <param name="Title">What it is for.</param>
/// <param name="AppliesTo">Oscillator kinds it may be used for.</param>
/// <param name="CoverageProbability">p.</param>
/// <param name="Contributions">Its lines, each with its stage.</param>
/// <param name="HoldDays">The in-use prediction's hold period after calibration, days (required when any line is in-use).</param>
public sealed record BudgetTemplate(string Id, int Version, string Title, IReadOnlyList<string> AppliesTo, double CoverageProbability,
    IReadOnlyList<TemplateContribution> Contributions, double HoldDays = 0);

/// <summary>The lab's budget templates, read once at start from <see cref="Hosting.CalBudgetOptions.TemplatesDirectory"/>.</summary>
public sealed partial class TemplateCatalog
{
    /// <summary>Model names as templates spell them.</summary>
    public static IReadOnlyDictionary<string, ContributionModel> ModelNames { get; } = new Dictionary<string, ContributionModel>(StringComparer.Ordinal)
    {
        ["reference"] = ContributionModel.Reference,
        ["resolution"] = ContributionModel.Resolution,
        ["type-a"] = ContributionModel.TypeA,
        ["orientation"] = ContributionModel.Orientation,
        ["temperature"] = ContributionModel.Temperature,
        ["aging"] = ContributionModel.Aging,
        ["retrace"] = ContributionModel.Retrace,
        ["supply"] = ContributionModel.Supply,
        ["other"] = ContributionModel.Other,
        ["warm-up"] = ContributionModel.WarmUp,
    };

    /// <summary>Stage names as templates spell them.</summary>
    public static IReadOnlyDictionary<string, BudgetStage> StageNames { get; } = new Dictionary<string, BudgetStage>(StringComparer.Ordinal)
    {
        ["calibration"] = BudgetStage.Calibration,
        ["in-use"] = BudgetStage.InUse,
    };

    /// <summary>The lab's scope beside the templates (<see cref="LabScope"/>), not a template.</summary>
    public const string ScopeFile = "scope.json";

    private readonly Dictionary<string, BudgetTemplate> _templates;

    private TemplateCatalog(Dictionary<string, BudgetTemplate> templates) => _templates = templates;

    /// <summary>Every template, by id.</summary>
    public IEnumerable<BudgetTemplate> All => _templates.Values.OrderBy(t => t.Id, StringComparer.Ordinal);

    /// <summary>The template with <paramref name="id"/>, or null.</summary>
    public BudgetTemplate? Find(string id) => _templates.GetValueOrDefault(id);

    /// <summary>Reads and checks every *.json file of <paramref name="directory"/>; throws <see cref="TemplateException"/> at the first fault.</summary>
    public static TemplateCatalog Load(string directory)
    {
        if (!Directory.Exists(directory))
        {
            throw new TemplateException(directory, "(folder)", "The templates folder does not exist.");
        }

        var templates = new Dictionary<string, BudgetTemplate>(StringComparer.Ordinal);
        foreach (string path in Directory.EnumerateFiles(directory, "*.json").Where(p => Path.GetFileName(p) != ScopeFile).Order(StringComparer.Ordinal))
        {
            var template = Read(Path.GetFileName(path), File.ReadAllBytes(path));
            templates[template.Id] = template;
        }

        return new TemplateCatalog(templates);
    }

    /// <summary>Reads and checks one template file.</summary>
    public static BudgetTemplate Read(string file, byte[] bytes)
    {
        ArgumentNullException.ThrowIfNull(file);
        ArgumentNullException.ThrowIfNull(bytes);
        var root = Parse(file, bytes);
        if (root.ValueKind != JsonValueKind.Object)
        {
            throw new TemplateException(file, "$", "A template is a JSON object.");
        }

        Known(file, "", root, "id", "version", "title", "appliesTo", "coverageProbability", "holdDays", "contributions");
        string id = Text(file, root, "id");
        if (!IdPattern().IsMatch(id) || id + ".json" != file)
        {
            throw new TemplateException(file, "id", $"'{id}' must be lowercase letters, digits and hyphens, and the file must be named '{id}.json'.");
        }

        int version = root.TryGetProperty("version", out var v) && v.ValueKind == JsonValueKind.Number && v.TryGetInt32(out int n) && n >= 1
            ? n : throw new TemplateException(file, "version", "Required: a whole number >= 1.");
        string title = Text(file, root, "title");
        var applies = root.TryGetProperty("appliesTo", out var a) && a.ValueKind == JsonValueKind.Array && a.GetArrayLength() > 0
            ? a.EnumerateArray().Select((k, i) => k.ValueKind == JsonValueKind.String && OscillatorKinds.All.Contains(k.GetString()!)
                ? k.GetString()! : throw new TemplateException(file, $"appliesTo[{i}]", $"One of {string.Join(", ", OscillatorKinds.All)}.")).ToArray()
            : throw new TemplateException(file, "appliesTo", "Required: the oscillator kinds the template is for.");
        double p = Number(file, root, "coverageProbability", "coverageProbability") is double q and > 0 and < 1
            ? q : throw new TemplateException(file, "coverageProbability", "Required: a probability between 0 and 1.");
        if (!root.TryGetProperty("contributions", out var list) || list.ValueKind != JsonValueKind.Array || list.GetArrayLength() == 0)
        {
            throw new TemplateException(file, "contributions", "Required: at least one contribution.");
        }

        var contributions = new List<TemplateContribution>();
        var names = new HashSet<string>(StringComparer.Ordinal);
        int index = 0;
        foreach (var c in list.EnumerateArray())
        {
            string at = $"contributions[{index++}]";
            if (c.ValueKind != JsonValueKind.Object)
            {
                throw new TemplateException(file, at, "A contribution is an object with a name and a model.");
            }

            string name = Text(file, c, "name", at);
            if (!names.Add(name))
            {
                throw new TemplateException(file, $"{at}.name", $"'{name}' is used by an earlier contribution.");
            }

            string modelName = Text(file, c, "model", at);
            if (!ModelNames.TryGetValue(modelName, out var model))
            {
                throw new TemplateException(file, $"{at}.model", $"Unknown model '{modelName}': one of {string.Join(", ", ModelNames.Keys)}.");
            }

            var allowed = BudgetStages.Allowed(model);
            var stage = allowed[0];
            if (c.TryGetProperty("stage", out var st))
            {
                if (st.ValueKind != JsonValueKind.String || !StageNames.TryGetValue(st.GetString()!, out stage))
                {
                    throw new TemplateException(file, $"{at}.stage", "One of calibration, in-use.");
                }

                if (!allowed.Contains(stage))
                {
                    throw new TemplateException(file, $"{at}.stage", $"A {modelName} line cannot be in the {st.GetString()} stage: {BudgetStages.Why(model)}.");
                }
            }
            else if (model == ContributionModel.Temperature)
            {
                stage = c.TryGetProperty("bandKelvin", out _) ? BudgetStage.InUse : BudgetStage.Calibration;
            }

            var line = model switch
            {
                ContributionModel.Temperature when stage == BudgetStage.InUse => Settings(file, c, at, ["bandKelvin"]) is var s ? new TemplateContribution(name, model, BandKelvin: s[0]) : null!,
                ContributionModel.Supply => Settings(file, c, at, ["halfWidth"]) is var s ? new TemplateContribution(name, model, HalfWidth: s[0]) : null!,
                ContributionModel.WarmUp => WarmUp(file, c, at, name),
                ContributionModel.Other => Other(file, c, at, name),
                _ => Settings(file, c, at, []) is not null ? new TemplateContribution(name, model) : null!,
            };
            contributions.Add(line with { Stage = stage });
        }

        double hold = Number(file, root, "holdDays", "holdDays") is double h ? (h >= 0 ? h : throw new TemplateException(file, "holdDays", "A number of days >= 0."))
            : contributions.Any(x => x.Stage == BudgetStage.InUse) ? throw new TemplateException(file, "holdDays", "Required with in-use lines: the prediction's hold period after calibration, days.")
            : 0;
        return new BudgetTemplate(id, version, title, applies, p, contributions, hold);
    }

    /// <summary>A lab file's JSON, or a <see cref="TemplateException"/> naming the file and where it breaks.</summary>
    internal static JsonElement Parse(string file, byte[] bytes)
    {
        // the reader checks UTF-8 only in the parts it decodes; a bad sequence in a name would surface later as another exception
        if (!System.Text.Unicode.Utf8.IsValid(bytes))
        {
            throw new TemplateException(file, "$", "Not UTF-8 text.");
        }

        try
        {
            using var document = JsonDocument.Parse(bytes);
            return document.RootElement.Clone();
        }
        catch (JsonException ex)
        {
            throw new TemplateException(file, ex.Path ?? "$", "Not valid JSON: " + ex.Message.Split(" Path:", 2)[0]);
        }
    }

    private static TemplateContribution WarmUp(string file, JsonElement c, string at, string name)
    {
        Known(file, at + ".", c, "name", "model", "stage", "whenShort", "halfWidth");
        string rule = Text(file, c, "whenShort", at);
        if (rule == "refuse")
        {
            return c.TryGetProperty("halfWidth", out _)
                ? throw new TemplateException(file, $"{at}.halfWidth", "Only with whenShort \"line\".")
                : new TemplateContribution(name, ContributionModel.WarmUp, WhenShort: WarmUpRule.Refuse);
        }

        if (rule != "line")
        {
            throw new TemplateException(file, $"{at}.whenShort", "One of refuse (a 422 when the warm-up was short or not recorded), line (a stated term).");
        }

        double value = Number(file, c, "halfWidth", $"{at}.halfWidth") is double x and >= 0 ? x
            : throw new TemplateException(file, $"{at}.halfWidth", "Required for whenShort \"line\": a number >= 0.");
        return new TemplateContribution(name, ContributionModel.WarmUp, HalfWidth: value, WhenShort: WarmUpRule.Line);
    }

    private static TemplateContribution Other(string file, JsonElement c, string at, string name)
    {
        Known(file, at + ".", c, "name", "model", "stage", "distribution", "halfWidth", "standardUncertainty");
        string distribution = Text(file, c, "distribution", at);
        var kind = distribution switch
        {
            "normal" => DistributionKind.Normal,
            "rectangular" => DistributionKind.Rectangular,
            "triangular" => DistributionKind.Triangular,
            "u-shaped" => DistributionKind.UShaped,
            _ => throw new TemplateException(file, $"{at}.distribution", "One of normal, rectangular, triangular, u-shaped."),
        };
        string field = kind == DistributionKind.Normal ? "standardUncertainty" : "halfWidth";
        double value = Number(file, c, field, $"{at}.{field}") is double x and >= 0 ? x
            : throw new TemplateException(file, $"{at}.{field}", $"Required for {distribution}: a number >= 0.");
        return kind == DistributionKind.Normal
            ? new TemplateContribution(name, ContributionModel.Other, Distribution: kind, StandardUncertainty: value)
            : new TemplateContribution(name, ContributionModel.Other, Distribution: kind, HalfWidth: value);
    }

    private static double[] Settings(string file, JsonElement c, string at, string[] required)
    {
        Known(file, at + ".", c, ["name", "model", "stage", .. required]);
        return required.Select(f => Number(file, c, f, $"{at}.{f}") is double x and >= 0
            ? x : throw new TemplateException(file, $"{at}.{f}", "Required: a number >= 0.")).ToArray();
    }

    private static void Known(string file, string at, JsonElement o, params string[] names)
    {
        foreach (var p in o.EnumerateObject())
        {
            if (!names.Contains(p.Name, StringComparer.Ordinal))
            {
                throw new TemplateException(file, at + p.Name, $"Unknown field: the fields here are {string.Join(", ", names)}.");
            }
        }
    }

    private static string Text(string file, JsonElement o, string name, string? at = null) =>
        o.TryGetProperty(name, out var v) && v.ValueKind == JsonValueKind.String && !string.IsNullOrWhiteSpace(v.GetString())
            ? v.GetString()!.Trim()
            : throw new TemplateException(file, at is null ? name : $"{at}.{name}", "Required: a non-empty string.");

    private static double? Number(string file, JsonElement o, string name, string path) =>
        !o.TryGetProperty(name, out var v) ? null
        : v.ValueKind == JsonValueKind.Number && v.TryGetDouble(out double d) && double.IsFinite(d) ? d
        : throw new TemplateException(file, path, "Must be a number.");

    [GeneratedRegex("^[a-z0-9]+(-[a-z0-9]+)*$", RegexOptions.CultureInvariant)]
    private static partial Regex IdPattern();

    /// <summary>The template's line as text, for the list endpoint.</summary>
    public static string Describe(TemplateContribution c) => (c.Stage == BudgetStage.Calibration ? "calibration result" : "in-use prediction") + c.Model switch
    {
        ContributionModel.Temperature when c.Stage == BudgetStage.InUse => string.Create(CultureInfo.InvariantCulture, $"; band {c.BandKelvin} K"),
        ContributionModel.Temperature => "; the run's recorded variation",
        ContributionModel.WarmUp => c.WhenShort == WarmUpRule.Line ? string.Create(CultureInfo.InvariantCulture, $"; when short, half-width {c.HalfWidth}") : "; when short, refused",
        ContributionModel.Supply => string.Create(CultureInfo.InvariantCulture, $"; half-width {c.HalfWidth}"),
        ContributionModel.Other => string.Create(CultureInfo.InvariantCulture, $"; {c.Distribution}, {(c.Distribution == DistributionKind.Normal ? $"u {c.StandardUncertainty}" : $"half-width {c.HalfWidth}")}"),
        _ => "",
    };
}
