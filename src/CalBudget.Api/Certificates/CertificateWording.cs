using System.Text.Json;
using CalBudget.Api.Budgets;

namespace CalBudget.Api.Certificates;

/// <summary>The wording blocks a lab may change (templates/wording/certificate.json), checked at start.</summary>
/// <param name="LabName">The laboratory's name.</param>
/// <param name="LabAddress">Its address lines.</param>
/// <param name="Title">The certificate's title.</param>
/// <param name="Method">Paragraphs describing the method.</param>
/// <param name="Traceability">How traceability is achieved.</param>
/// <param name="Statements">The statements every certificate carries.</param>
/// <param name="Footer">The caution line in every footer.</param>
public sealed record CertificateWording(string LabName, IReadOnlyList<string> LabAddress, string Title, IReadOnlyList<string> Method, string Traceability,
    IReadOnlyList<string> Statements, string Footer)
{
    private static readonly JsonSerializerOptions Strict = new(JsonSerializerDefaults.Web)
    {
        UnmappedMemberHandling = System.Text.Json.Serialization.JsonUnmappedMemberHandling.Disallow,
    };

    /// <summary>Reads and checks <paramref name="path"/>; a fault throws <see cref="TemplateException"/> naming the file and field.</summary>
    public static CertificateWording Load(string path)
    {
        string file = Path.GetFileName(path);
        if (!File.Exists(path))
        {
            throw new TemplateException(file, "$", $"The certificate wording file {path} is missing.");
        }

        CertificateWording? w;
        byte[] bytes = File.ReadAllBytes(path);
        if (!System.Text.Unicode.Utf8.IsValid(bytes))
        {
            throw new TemplateException(file, "$", "Not UTF-8 text.");
        }

        try
        {
            w = JsonSerializer.Deserialize<CertificateWording>(bytes, Strict);
        }
        catch (JsonException ex)
        {
            throw new TemplateException(file, string.IsNullOrEmpty(ex.Path) ? "$" : ex.Path!.TrimStart('$', '.'), "Not valid wording: " + ex.Message);
        }

        void Need(bool ok, string field)
        {
            if (!ok)
            {
                throw new TemplateException(file, field, $"{file}: '{field}' is required and must not be empty.");
            }
        }

        Need(w is not null, "$");
        Need(!string.IsNullOrWhiteSpace(w!.LabName), "labName");
        Need(w.LabAddress is { Count: > 0 }, "labAddress");
        Need(!string.IsNullOrWhiteSpace(w.Title), "title");
        Need(w.Method is { Count: > 0 }, "method");
        Need(!string.IsNullOrWhiteSpace(w.Traceability), "traceability");
        Need(w.Statements is { Count: > 0 }, "statements");
        Need(!string.IsNullOrWhiteSpace(w.Footer), "footer");
        return w;
    }
}
