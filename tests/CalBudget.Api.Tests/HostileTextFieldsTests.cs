using System.Net;
using System.Text;
using System.Text.Json.Nodes;

namespace CalBudget.Api.Tests;

/// <summary>
/// Every text field of every record a LIMS creates (instruments, reference standards, calibration runs, budgets), each in
/// turn given control characters, a 100,000-character string, or bytes that are not UTF-8: never a server error; a refusal
/// is problem details and leaves no record behind; what is accepted comes back verbatim.
/// </summary>
public sealed class HostileTextFieldsTests : IDisposable
{
    private const string Unique = "UNIQ-0000";
    private const string Placeholder = "NOT-UTF8-HERE";
    private static readonly string Control = "a\u0001b\u001Fc\u007Fd\u2028e";

    private readonly ServiceFactory _factory = new();
    private int _serial;

    public void Dispose() => _factory.Dispose();

    // The string-valued leaves of a JSON body, by path.
    private static IEnumerable<(JsonNode Parent, object Key, string Path)> TextFields(JsonNode node, string path = "")
    {
        switch (node)
        {
            case JsonObject o:
                foreach (var (name, child) in o.ToArray())
                {
                    if (child is JsonValue v && v.TryGetValue<string>(out _))
                    {
                        yield return (o, name, path + name);
                    }
                    else if (child is not null)
                    {
                        foreach (var inner in TextFields(child, path + name + "."))
                        {
                            yield return inner;
                        }
                    }
                }

                break;
            case JsonArray a:
                for (int i = 0; i < a.Count; i++)
                {
                    if (a[i] is JsonValue v && v.TryGetValue<string>(out _))
                    {
                        yield return (a, i, $"{path.TrimEnd('.')}[{i}]");
                    }
                    else if (a[i] is { } child)
                    {
                        foreach (var inner in TextFields(child, $"{path.TrimEnd('.')}[{i}]."))
                        {
                            yield return inner;
                        }
                    }
                }

                break;
        }
    }

    // The body with one field set to the hostile value (a placeholder where the bytes will not be UTF-8).
    private byte[] Variant(string valid, int field, string kind)
    {
        var node = JsonNode.Parse(valid.Replace(Unique, $"UNIQ-{Interlocked.Increment(ref _serial)}", StringComparison.Ordinal))!;
        var (parent, key, _) = TextFields(node).ElementAt(field);
        JsonNode value = kind switch { "control" => Control, "long" => new string('x', 100_000), _ => Placeholder };
        if (parent is JsonObject o)
        {
            o[(string)key] = value;
        }
        else
        {
            ((JsonArray)parent)[(int)key] = value;
        }

        byte[] bytes = Encoding.UTF8.GetBytes(node.ToJsonString());
        if (kind != "not-utf8")
        {
            return bytes;
        }

        int at = bytes.AsSpan().IndexOf(Encoding.UTF8.GetBytes(Placeholder));
        return [.. bytes[..at], 0xC3, 0x28, 0xFF, .. bytes[(at + Placeholder.Length)..]];
    }

    private async Task CheckEveryFieldAsync(HttpClient client, string path, string valid, string? listPath)
    {
        async Task<int> CountAsync() => listPath is null ? 0
            : (await Json.ReadAsync(await client.GetAsync(listPath), HttpStatusCode.OK))["items"]!.AsArray().Count;
        int records = await CountAsync();
        var names = TextFields(JsonNode.Parse(valid)!).Select(f => f.Path).ToArray();
        Assert.NotEmpty(names);
        for (int field = 0; field < names.Length; field++)
        {
            foreach (string kind in new[] { "control", "long", "not-utf8" })
            {
                string name = names[field];
                var content = new ByteArrayContent(Variant(valid, field, kind));
                content.Headers.ContentType = Json.JsonType;
                var answer = await client.PostAsync(path, content);
                string reply = await answer.Content.ReadAsStringAsync();
                Assert.True((int)answer.StatusCode < 500, $"{path} {name} {kind}: {(int)answer.StatusCode} {reply}");
                if (answer.IsSuccessStatusCode)
                {
                    records += listPath is null ? 0 : 1;
                    if (kind == "control")
                    {
                        // stored and returned exactly as sent
                        Assert.Contains(Control, Strings(JsonNode.Parse(reply)!));
                    }
                }
                else
                {
                    Assert.Equal("application/problem+json", answer.Content.Headers.ContentType?.MediaType);
                    if (kind == "not-utf8")
                    {
                        Assert.Equal(HttpStatusCode.BadRequest, answer.StatusCode);
                    }
                }

                Assert.Equal(records, await CountAsync()); // a refusal leaves nothing behind
            }
        }
    }

    private static IEnumerable<string> Strings(JsonNode node) => node switch
    {
        JsonObject o => o.SelectMany(p => p.Value is null ? [] : Strings(p.Value)),
        JsonArray a => a.SelectMany(v => v is null ? [] : Strings(v)),
        JsonValue v when v.TryGetValue<string>(out var s) => [s],
        _ => [],
    };

    [Fact]
    public async Task InstrumentsReferencesRunsAndBudgetsTakeHostileTextWithoutHarm()
    {
        var tech = await _factory.ClientAsync("technician");
        await CheckEveryFieldAsync(tech, "/api/v1/instruments",
            LabRecords.PlainInstrumentBody(Unique, "Harbour Test House"), "/api/v1/instruments?limit=200");

        string reference = $$"""
        { "identity": "{{Unique}}", "kind": "rubidium", "nominalFrequencyHz": 10000000, "description": "bench standard",
          "calibration": { "certificateNumber": "TL-2026-0417", "issuingLab": "Regional time laboratory", "date": "{{DateTimeOffset.UtcNow.AddDays(-100):O}}",
                           "fractionalOffset": 1.5e-12, "expandedUncertainty": 2e-12, "coverageFactor": 2 },
          "dueDate": "{{DateTimeOffset.UtcNow.AddDays(300):O}}" }
        """;
        await CheckEveryFieldAsync(tech, "/api/v1/references", reference, "/api/v1/references?limit=200");

        long instrument = await LabRecords.InstrumentAsync(tech, "CB-0880");
        long referenceId = await LabRecords.ReferenceAsync(tech, "RB-0880");
        await CheckEveryFieldAsync(tech, "/api/v1/calibrations", LabRecords.RunBody(instrument, referenceId), "/api/v1/calibrations?limit=200");
        await CheckEveryFieldAsync(tech, "/api/v1/calibrations", LabRecords.RunBody(instrument, referenceId, posture: """{ "up": "-x" }"""), "/api/v1/calibrations?limit=200");

        long run = await LabRecords.RunWithReadingsAsync(tech, "CB-0881");
        string build = $$"""
        { "runId": {{run}}, "templateId": "ocxo-counter", "posturePolicy": { "kind": "tilt-limit", "tiltLimitDegrees": 20 },
          "overrides": [ { "name": "temperature", "halfWidth": 2e-10, "reason": "chamber log" } ] }
        """;
        await CheckEveryFieldAsync(tech, "/api/v1/budgets", build, $"/api/v1/budgets?runId={run}&limit=200");
        await CheckEveryFieldAsync(tech, "/api/v1/budgets", $$"""{ "runId": {{run}}, "templateId": "ocxo-counter", "posturePolicy": { "kind": "known", "useUp": "+x" } }""",
            $"/api/v1/budgets?runId={run}&limit=200");
    }

    [Fact]
    public async Task TheOrientationCalculationsTakeHostileTextWithoutHarm()
    {
        // stateless: no record to count, only the answers
        var client = await _factory.ClientAsync("integration");
        await CheckEveryFieldAsync(client, "/api/v1/orientation/shift", """{"gamma":[0,0,2e-9],"calibrationUp":"+z","useUp":"-z"}""", null);
        await CheckEveryFieldAsync(client, "/api/v1/orientation/sensitivity", """
            { "observations": [ { "up": "+x", "fractionalOffset": 1.3e-10 }, { "up": "-x", "fractionalOffset": -7e-11 },
              { "up": "+y", "fractionalOffset": -1.7e-10 }, { "up": "-y", "fractionalOffset": 2.3e-10 }, { "up": "+z", "fractionalOffset": 4.3e-10 } ] }
            """, null);
    }
}
