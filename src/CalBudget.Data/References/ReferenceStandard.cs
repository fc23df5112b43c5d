namespace CalBudget.Data.References;

/// <summary>The reference-standard kinds the laboratory holds.</summary>
public static class ReferenceKinds
{
    /// <summary>Every kind, as stored and as the API names them.</summary>
    public static IReadOnlyList<string> All { get; } = ["rubidium", "gnss-disciplined", "cesium", "hydrogen-maser", "ocxo", "other"];
}

/// <summary>What a reference standard is and how it is itself calibrated; the fields a client writes.</summary>
/// <param name="Identity">Unique identification (asset number or serial).</param>
/// <param name="Kind">One of <see cref="ReferenceKinds.All"/>.</param>
/// <param name="Description">Free text.</param>
/// <param name="NominalFrequencyHz">Nominal output frequency, Hz, &gt; 0.</param>
/// <param name="CertificateNumber">Its own calibration certificate.</param>
/// <param name="IssuingLab">Who issued that certificate.</param>
/// <param name="CalibrationDate">When it was calibrated (UTC).</param>
/// <param name="FractionalOffset">Its certified fractional frequency offset.</param>
/// <param name="ExpandedUncertainty">U of that offset.</param>
/// <param name="CoverageFactor">k of U.</param>
/// <param name="DriftPerDay">Fractional frequency drift per day since calibration.</param>
/// <param name="DriftUncertaintyPerDay">Standard uncertainty of the drift rate, per day.</param>
/// <param name="DueDate">When its calibration falls due (UTC).</param>
public sealed record ReferenceStandardFields(string Identity, string Kind, string Description, double NominalFrequencyHz,
    string CertificateNumber, string IssuingLab, DateTimeOffset CalibrationDate, double FractionalOffset, double ExpandedUncertainty,
    double CoverageFactor, double DriftPerDay, double DriftUncertaintyPerDay, DateTimeOffset DueDate);

/// <summary>A stored reference standard.</summary>
/// <param name="Id">Its id.</param>
/// <param name="Fields">What it is.</param>
/// <param name="Version">Incremented by every update; the ETag.</param>
/// <param name="RetiredAt">When retired, or null.</param>
/// <param name="RetiredReason">Why.</param>
/// <param name="CreatedAt">When recorded.</param>
/// <param name="CreatedBy">By whom.</param>
/// <param name="UpdatedAt">Last change.</param>
/// <param name="UpdatedBy">By whom.</param>
public sealed record ReferenceStandard(long Id, ReferenceStandardFields Fields, long Version, DateTimeOffset? RetiredAt, string? RetiredReason,
    DateTimeOffset CreatedAt, string CreatedBy, DateTimeOffset UpdatedAt, string UpdatedBy) : IVersionedRecord
{
    /// <summary>Whether a new calibration run may use it at <paramref name="now"/>, and if not, why.</summary>
    public (bool Usable, string? Reason) UsableAt(DateTimeOffset now) =>
        RetiredAt is not null ? (false, $"The reference '{Fields.Identity}' is retired.")
        : now > Fields.DueDate ? (false, $"The reference '{Fields.Identity}' fell due on {Fields.DueDate:yyyy-MM-dd}: it is out of calibration.")
        : (true, null);
}
