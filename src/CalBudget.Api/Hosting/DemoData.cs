using System.Text.Json;
using CalBudget.Api.Calibrations;
using CalBudget.Api.Instruments;
using CalBudget.Data;
using CalBudget.Data.Calibrations;
using CalBudget.Data.Instruments;
using CalBudget.Data.References;
using Microsoft.AspNetCore.Http.Json;
using Microsoft.Extensions.Options;

namespace CalBudget.Api.Hosting;

/// <summary>
/// The Development demo: an invented laboratory's instruments and reference standards, written into a new database so the
/// README's tour shows real output. Every name here is invented. Production never seeds anything.
/// </summary>
public static class DemoData
{
    private const string Actor = "demo-seed";

    private static readonly (string Asset, string Customer, string Maker, string Model, string Kind, double Tolerance, double? Gamma)[] Instruments =
    [
        ("CB-0042", "Northfield Avionics", "Quillon Instruments", "FC-900 universal counter", "OCXO", 2e-8, 1e-9),
        ("CB-0043", "Northfield Avionics", "Quillon Instruments", "FC-900 universal counter", "OCXO", 2e-8, 1e-9),
        ("CB-0051", "Northfield Avionics", "Tessary Devices", "SG-40 signal generator", "TCXO", 1e-6, 5e-9),
        ("CB-0077", "Harbour Test House", "Vexmoor Electronics", "SA-7 spectrum analyser", "OCXO", 1e-7, 2e-9),
        ("CB-0078", "Harbour Test House", "Vexmoor Electronics", "SA-7 spectrum analyser", "TCXO", 2e-6, 5e-9),
        ("CB-0102", "Harbour Test House", "Quillon Instruments", "RO-10 reference oscillator", "OCXO", 1e-9, 4e-10),
        ("CB-0131", "Calder Rail Signalling", "Tessary Devices", "FC-12 frequency counter", "XO", 1e-5, null),
        ("CB-0132", "Calder Rail Signalling", "Tessary Devices", "FC-12 frequency counter", "XO", 1e-5, null),
        ("CB-0150", "Calder Rail Signalling", "Vexmoor Electronics", "TS-3 time server", "GNSS-disciplined", 1e-11, 1e-9),
        ("CB-0188", "Westmere University, physics workshop", "Quillon Instruments", "RB-5 rubidium source", "rubidium", 5e-11, 1e-10),
        ("CB-0189", "Westmere University, physics workshop", "Tessary Devices", "SG-40 signal generator", "OCXO", 1e-7, 1e-9),
        ("CB-0200", "Westmere University, physics workshop", "Vexmoor Electronics", "OS-8 oscilloscope", "other", 2.5e-5, null),
    ];

    /// <summary>Writes the demo records in one transaction.</summary>
    public static async Task SeedAsync(IServiceProvider services, CancellationToken ct = default)
    {
        ArgumentNullException.ThrowIfNull(services);
        var database = services.GetRequiredService<IDbConnectionFactory>();
        var json = services.GetRequiredService<IOptions<JsonOptions>>().Value.SerializerOptions;
        var now = services.GetRequiredService<TimeProvider>().GetUtcNow();
        await using var work = await UnitOfWork.BeginAsync(database, ct);
        var ids = new List<long>();
        for (int index = 0; index < Instruments.Length; index++)
        {
            var (asset, customer, maker, model, kind, tolerance, gamma) = Instruments[index];
            var spec = new TimebaseSpecificationDto(new ToleranceDto(-tolerance, tolerance, "one year after calibration, 23 +/- 5 degC"),
                kind switch { "XO" or "TCXO" => 1e-9, "OCXO" => 1e-11, "rubidium" => 2e-12, _ => 0 }, null, kind switch { "XO" => 1e-8, "OCXO" => 1e-11, _ => 1e-10 }, new RangeDto(0, 50), gamma, kind is "rubidium" or "OCXO" ? 30 : 5, kind switch { "OCXO" => 5e-9, "rubidium" => 5e-11, _ => null });
            NamedPosture[] postures =
            [
                new("standing on its feet", 0, 0, 1),
                new("stand extended", 0, -0.25881904510252074, 0.96592582628906831),
                new("on its left side", -1, 0, 0),
            ];
            var instrument = await InstrumentStore.CreateAsync(work, new InstrumentFields(asset, customer, maker, model, $"S/N {maker[0]}{7100 + 37 * index}",
                $"{model}, 10 MHz timebase", kind, 10e6, JsonSerializer.Serialize(spec, json), postures), Actor, now);
            ids.Add(instrument.Id);
        }

        var rb = await ReferenceStandardStore.CreateAsync(work, new ReferenceStandardFields("RB-01", "rubidium", "lab rubidium standard, rack 2", 10e6,
            "TL-2026-0417", "Regional time laboratory (invented)", now.AddDays(-340), 1.5e-12, 2e-12, 2, 1e-14, 2e-15, now.AddDays(25)), Actor, now);
        var gps = await ReferenceStandardStore.CreateAsync(work, new ReferenceStandardFields("GPS-02", "gnss-disciplined", "GNSS-disciplined oscillator, roof antenna", 10e6,
            "TL-2026-0733", "Regional time laboratory (invented)", now.AddDays(-40), 0, 1e-12, 2, 0, 0, now.AddDays(325)), Actor, now);
        await SeedRunsAsync(work, ids, rb.Id, gps.Id, now, ct);
        await work.CommitAsync(ct);
    }

    // A few runs with synthetic readings: white FM noise of the instrument's oscillator, a slow random walk, linear drift, and the
    // comparator's quantisation, around an offset typical of its kind. Deterministic (fixed seeds), so the tour is repeatable.
    private static async Task SeedRunsAsync(UnitOfWork work, List<long> instruments, long rb, long gps, DateTimeOffset now, CancellationToken ct)
    {
        var day = new DateTimeOffset(now.UtcDateTime.Date, TimeSpan.Zero).AddDays(-3);
        var runs = new (int Instrument, long Reference, string Posture, double[]? Up, string Condition, double Gate, int Count, double Offset, double WhiteFm, bool Frequency, int Seed)[]
        {
            (0, rb, "standing on its feet", null, "as-found", 1, 600, 2.31e-9, 3e-12, true, 42),
            (0, rb, "standing on its feet", null, "as-left", 1, 600, 4.0e-11, 3e-12, true, 43),
            (5, gps, "on its left side", null, "as-found", 10, 360, -6.2e-10, 1.5e-12, false, 44),
            (2, gps, "", [0, -0.5, 0.8660254037844386], "as-found", 1, 300, 3.7e-7, 2e-10, true, 45),
        };
        var offset = TimeSpan.Zero;
        foreach (var r in runs)
        {
            var start = day.AddHours(9) + offset;
            offset += TimeSpan.FromHours(2);
            var instrument = (await InstrumentStore.GetAsync(work, instruments[r.Instrument]))!;
            var posture = r.Up is null ? instrument.Fields.Postures.First(p => p.Name == r.Posture) : null;
            double[] up = posture is null ? r.Up! : [posture.X, posture.Y, posture.Z];
            var run = await CalibrationRunStore.CreateAsync(work, new CalibrationRunFields(instrument.Id, r.Reference, "lab counter C-3 (invented)",
                r.Frequency ? 1e-12 / r.Gate : 1e-13, r.Gate, posture?.Name, up[0], up[1], up[2], new RunEnvironment(23.1, 0.2, 41, "230 V 50 Hz mains"),
                r.Condition, start, start.AddSeconds(r.Gate * r.Count), $"Demo run (synthetic readings), {r.Count} readings of {r.Gate} s.", WarmUpMinutes: 240), Actor, now);
            string csv = SyntheticCsv(start, r.Gate, r.Count, r.Offset, r.WhiteFm, r.Frequency, instrument.Fields.NominalFrequencyHz, r.Seed);
            await UploadAsync(work, run.Id, null, null, csv, instrument.Fields.NominalFrequencyHz, now, ct);
            if (r.Seed == 44)
            {
                var first = (await ReadingStore.LatestAsync(work, run.Id))!;
                string corrected = SyntheticCsv(start, r.Gate, r.Count, r.Offset, r.WhiteFm, r.Frequency, instrument.Fields.NominalFrequencyHz, r.Seed, digits: 15);
                await UploadAsync(work, run.Id, first.Id, "re-exported from the counter with its full resolution", corrected, instrument.Fields.NominalFrequencyHz, now, ct);
            }
        }
    }

    private static async Task UploadAsync(UnitOfWork work, long runId, long? supersedes, string? reason, string csv, double nominal, DateTimeOffset now, CancellationToken ct)
    {
        await using var writer = await ReadingStore.BeginUploadAsync(work, runId, supersedes, reason, ReadingsCsvParser.MediaType, Actor, now);
        await using var bytes = new MemoryStream(System.Text.Encoding.UTF8.GetBytes(csv));
        string quantity = await ReadingsApi.WriteCsvAsync(bytes, writer, new ReadingRules(nominal), ct);
        await writer.CompleteAsync(quantity, ct);
    }

    private static string SyntheticCsv(DateTimeOffset start, double gate, int count, double offset, double whiteFm, bool frequency, double nominal, int seed, int digits = 13)
    {
        var random = new Random(seed);
        var text = new System.Text.StringBuilder(frequency ? "timestamp,frequencyHz\n" : "timestamp,fractionalOffset\n");
        double walk = 0;
        for (int k = 0; k < count; k++)
        {
            double white = whiteFm / Math.Sqrt(gate) * Gaussian(random);
            walk += 0.05 * whiteFm * Gaussian(random);
            double y = offset + 1e-15 * k * gate + white + walk;
            string at = start.AddSeconds(gate * (k + 1)).UtcDateTime.ToString("yyyy-MM-dd'T'HH:mm:ss'Z'", System.Globalization.CultureInfo.InvariantCulture);
            string value = frequency
                ? (nominal * (1 + y)).ToString("F6", System.Globalization.CultureInfo.InvariantCulture)
                : Math.Round(y, digits).ToString("R", System.Globalization.CultureInfo.InvariantCulture);
            text.Append(at).Append(',').Append(value).Append('\n');
        }

        return text.ToString();
    }

    private static double Gaussian(Random random) =>
        Math.Sqrt(-2 * Math.Log(1 - random.NextDouble())) * Math.Cos(2 * Math.PI * random.NextDouble());
}
