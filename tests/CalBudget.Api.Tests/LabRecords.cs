using System.Net;
using System.Text.Json.Nodes;

namespace CalBudget.Api.Tests;

/// <summary>Invented records the calibration tests build on (demo-style data, not check values).</summary>
internal static class LabRecords
{
    /// <summary>A plain XO instrument with one posture (asset and customer as given).</summary>
    public static string PlainInstrumentBody(string asset, string customer) => $$"""
        { "assetNumber": "{{asset}}", "customer": "{{customer}}", "manufacturer": "Tessary Devices", "model": "FC-12",
          "timebase": { "oscillatorKind": "XO", "nominalFrequencyHz": 10000000 }, "postures": [ { "name": "standing on its feet", "up": "+z" } ] }
        """;

    public static async Task<long> InstrumentAsync(HttpClient client, string asset = "CB-0042", double nominalHz = 10e6)
    {
        string body = $$"""
        { "assetNumber": "{{asset}}", "customer": "Northfield Avionics", "manufacturer": "Quillon Instruments", "model": "FC-900",
          "timebase": { "oscillatorKind": "OCXO", "nominalFrequencyHz": {{nominalHz}} },
          "postures": [ { "name": "standing on its feet", "up": "+z" }, { "name": "on its left side", "up": "-x" } ] }
        """;
        var node = await Json.PostAsync(client, "/api/v1/instruments", body, HttpStatusCode.Created);
        return node["id"]!.GetValue<long>();
    }

    /// <summary>A reference standard falling due <paramref name="dueInDays"/> from now (negative: overdue).</summary>
    public static async Task<long> ReferenceAsync(HttpClient client, string identity = "RB-01", int dueInDays = 300)
    {
        string body = $$"""
        { "identity": "{{identity}}", "kind": "rubidium", "nominalFrequencyHz": 10000000,
          "calibration": { "certificateNumber": "TL-2026-0417", "issuingLab": "Regional time laboratory", "date": "{{DateTimeOffset.UtcNow.AddDays(dueInDays - 400):O}}",
                           "fractionalOffset": 1.5e-12, "expandedUncertainty": 2e-12, "coverageFactor": 2 },
          "dueDate": "{{DateTimeOffset.UtcNow.AddDays(dueInDays):O}}" }
        """;
        var node = await Json.PostAsync(client, "/api/v1/references", body, HttpStatusCode.Created);
        return node["id"]!.GetValue<long>();
    }

    public static string RunBody(long instrumentId, long referenceId, string posture = """{ "name": "standing on its feet" }""", string condition = "as-found",
        double gate = 1, string extra = "") => $$"""
        { "instrumentId": {{instrumentId}}, "referenceId": {{referenceId}},
          "comparator": { "name": "lab counter C-3", "resolution": 1e-12 }, "gateTimeSeconds": {{gate}},
          "posture": {{posture}},
          "environment": { "temperatureCelsius": 23.1, "temperatureVariationKelvin": 0.4, "relativeHumidityPercent": 41, "supply": "230 V 50 Hz" },
          "condition": "{{condition}}", "startedAt": "2026-11-30T09:00:00Z", "endedAt": "2026-11-30T09:10:00Z", "notes": "bench 2\nwarm-up 30 min"{{extra}} }
        """;

    /// <summary>An instrument, a usable reference and a run on them; the run's id.</summary>
    public static async Task<long> RunAsync(HttpClient client, string asset = "CB-0042")
    {
        long instrument = await InstrumentAsync(client, asset);
        long reference = await ReferenceAsync(client, "RB-" + asset);
        var run = await Json.PostAsync(client, "/api/v1/calibrations", RunBody(instrument, reference), HttpStatusCode.Created);
        return run["id"]!.GetValue<long>();
    }

    public static JsonNode? Field(JsonNode node, string path) =>
        path.Split('.').Aggregate<string, JsonNode?>(node, (n, key) => n?[key]);

    /// <summary>
    /// An OCXO instrument with a specification the budget templates use, a reference, a run on them and 200 readings
    /// uploaded; the run's id.
    /// </summary>
    public static async Task<long> RunWithReadingsAsync(HttpClient client, string asset)
    {
        string instrument = $$"""
        { "assetNumber": "{{asset}}", "customer": "Northfield Avionics", "manufacturer": "Quillon Instruments", "model": "FC-900",
          "timebase": { "oscillatorKind": "OCXO", "nominalFrequencyHz": 10000000,
            "specification": { "agingPerDay": 5e-10, "temperatureCoefficientPerKelvin": 1e-10, "accelerationSensitivityPerG": 1e-9, "retrace": 5e-9 } },
          "postures": [ { "name": "standing on its feet", "up": "+z" } ] }
        """;
        long instrumentId = (await Json.PostAsync(client, "/api/v1/instruments", instrument, HttpStatusCode.Created))["id"]!.GetValue<long>();
        long referenceId = await ReferenceAsync(client, "RB-" + asset);
        long run = (await Json.PostAsync(client, "/api/v1/calibrations", RunBody(instrumentId, referenceId), HttpStatusCode.Created))["id"]!.GetValue<long>();
        var csv = new System.Text.StringBuilder("timestamp,fractionalOffset\n");
        for (int k = 0; k < 200; k++)
        {
            csv.Append(System.Globalization.CultureInfo.InvariantCulture, $"2026-11-30T09:{k / 60:00}:{k % 60:00}Z,{2e-9 + 1e-12 * (k % 7)}\n");
        }

        await Json.ReadAsync(await client.PostAsync($"/api/v1/calibrations/{run}/readings", new StringContent(csv.ToString(), System.Text.Encoding.UTF8, "text/csv")), HttpStatusCode.Created);
        return run;
    }
}
