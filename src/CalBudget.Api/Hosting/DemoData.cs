using System.Text.Json;
using CalBudget.Api.Instruments;
using CalBudget.Data;
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
        ("CB-0042", "Northfield Avionics", "Quillon Instruments", "FC-900 universal counter", "OCXO", 5e-9, 1e-9),
        ("CB-0043", "Northfield Avionics", "Quillon Instruments", "FC-900 universal counter", "OCXO", 5e-9, 1e-9),
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
        for (int index = 0; index < Instruments.Length; index++)
        {
            var (asset, customer, maker, model, kind, tolerance, gamma) = Instruments[index];
            var spec = new TimebaseSpecificationDto(new ToleranceDto(-tolerance, tolerance, "one year after calibration, 23 +/- 5 degC"),
                kind is "XO" or "TCXO" ? 1e-9 : 5e-10, null, kind == "XO" ? 1e-8 : 1e-10, new RangeDto(0, 50), gamma, kind is "rubidium" or "OCXO" ? 30 : 5, null);
            NamedPosture[] postures =
            [
                new("standing on its feet", 0, 0, 1),
                new("stand extended", 0, -0.25881904510252074, 0.96592582628906831),
                new("on its left side", -1, 0, 0),
            ];
            await InstrumentStore.CreateAsync(work, new InstrumentFields(asset, customer, maker, model, $"S/N {maker[0]}{7100 + 37 * index}",
                $"{model}, 10 MHz timebase", kind, 10e6, JsonSerializer.Serialize(spec, json), postures), Actor, now);
        }

        await ReferenceStandardStore.CreateAsync(work, new ReferenceStandardFields("RB-01", "rubidium", "lab rubidium standard, rack 2", 10e6,
            "TL-2026-0417", "Regional time laboratory (invented)", now.AddDays(-340), 1.5e-12, 2e-12, 2, 1e-14, 2e-15, now.AddDays(25)), Actor, now);
        await ReferenceStandardStore.CreateAsync(work, new ReferenceStandardFields("GPS-02", "gnss-disciplined", "GNSS-disciplined oscillator, roof antenna", 10e6,
            "TL-2026-0733", "Regional time laboratory (invented)", now.AddDays(-40), 0, 1e-12, 2, 0, 0, now.AddDays(325)), Actor, now);
        await work.CommitAsync(ct);
    }
}
