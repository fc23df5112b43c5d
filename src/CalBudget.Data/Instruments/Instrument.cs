namespace CalBudget.Data.Instruments;

/// <summary>The oscillator kinds of an instrument's timebase.</summary>
public static class OscillatorKinds
{
    /// <summary>Every kind, as stored and as the API names them.</summary>
    public static IReadOnlyList<string> All { get; } = ["XO", "TCXO", "OCXO", "rubidium", "GNSS-disciplined", "other"];
}

/// <summary>A posture the lab uses with an instrument: a name and the unit up vector in the body frame.</summary>
/// <param name="Name">For example "standing on its feet".</param>
/// <param name="X">Up vector, +x (right, seen from the front).</param>
/// <param name="Y">Up vector, +y (toward the rear).</param>
/// <param name="Z">Up vector, +z (up through the top cover).</param>
public sealed record NamedPosture(string Name, double X, double Y, double Z);

/// <summary>What a client writes about an instrument.</summary>
/// <param name="AssetNumber">Unique asset number.</param>
/// <param name="Customer">Whose it is.</param>
/// <param name="Manufacturer">Free text.</param>
/// <param name="Model">Free text.</param>
/// <param name="SerialNumber">Free text.</param>
/// <param name="Description">Free text.</param>
/// <param name="OscillatorKind">One of <see cref="OscillatorKinds.All"/>.</param>
/// <param name="NominalFrequencyHz">The timebase's nominal frequency.</param>
/// <param name="SpecificationJson">The timebase specification as the API's JSON object (validated by the caller).</param>
/// <param name="Postures">The postures the lab uses, in order, names unique.</param>
public sealed record InstrumentFields(string AssetNumber, string Customer, string Manufacturer, string Model, string SerialNumber, string Description,
    string OscillatorKind, double NominalFrequencyHz, string SpecificationJson, IReadOnlyList<NamedPosture> Postures);

/// <summary>A stored instrument.</summary>
/// <param name="Id">Its id.</param>
/// <param name="Fields">What it is.</param>
/// <param name="Version">Incremented by every change; the ETag.</param>
/// <param name="RetiredAt">When retired.</param>
/// <param name="RetiredReason">Why.</param>
/// <param name="CreatedAt">Recorded at.</param>
/// <param name="CreatedBy">By whom.</param>
/// <param name="UpdatedAt">Last change.</param>
/// <param name="UpdatedBy">By whom.</param>
public sealed record Instrument(long Id, InstrumentFields Fields, long Version, DateTimeOffset? RetiredAt, string? RetiredReason,
    DateTimeOffset CreatedAt, string CreatedBy, DateTimeOffset UpdatedAt, string UpdatedBy) : IVersionedRecord;
