namespace CalBudget.Api.References;

/// <summary>A reference standard as written by a client (create, or full replacement with If-Match).</summary>
/// <param name="Identity">Unique identification (asset number or serial), 1 to 100 characters.</param>
/// <param name="Kind">rubidium, gnss-disciplined, cesium, hydrogen-maser, ocxo or other.</param>
/// <param name="Description">Free text, up to 1000 characters.</param>
/// <param name="NominalFrequencyHz">Nominal output frequency in Hz, &gt; 0.</param>
/// <param name="Calibration">Its own calibration.</param>
/// <param name="DueDate">When that calibration falls due (RFC 3339); after it the reference cannot be used for a new run.</param>
public sealed record ReferenceStandardRequest(string? Identity, string? Kind, string? Description, double? NominalFrequencyHz,
    ReferenceCalibrationDto? Calibration, DateTimeOffset? DueDate);

/// <summary>The reference's own calibration.</summary>
/// <param name="CertificateNumber">Its certificate.</param>
/// <param name="IssuingLab">Who issued it.</param>
/// <param name="Date">When it was calibrated (RFC 3339).</param>
/// <param name="FractionalOffset">Certified fractional frequency offset.</param>
/// <param name="ExpandedUncertainty">U of that offset, &gt;= 0.</param>
/// <param name="CoverageFactor">k of U, &gt; 0.</param>
/// <param name="DriftPerDay">Fractional frequency drift per day (default 0).</param>
/// <param name="DriftUncertaintyPerDay">Standard uncertainty of the drift rate per day (default 0).</param>
public sealed record ReferenceCalibrationDto(string? CertificateNumber, string? IssuingLab, DateTimeOffset? Date, double? FractionalOffset,
    double? ExpandedUncertainty, double? CoverageFactor, double? DriftPerDay, double? DriftUncertaintyPerDay);

/// <summary>A stored reference standard.</summary>
/// <param name="Id">Its id.</param>
/// <param name="Identity">Identification.</param>
/// <param name="Kind">Kind.</param>
/// <param name="Description">Description.</param>
/// <param name="NominalFrequencyHz">Nominal frequency, Hz.</param>
/// <param name="Calibration">Its own calibration.</param>
/// <param name="DueDate">Due date.</param>
/// <param name="Status">"in calibration", "due soon" (within 30 days), "overdue" or "retired".</param>
/// <param name="Usable">Whether a new calibration run may use it now.</param>
/// <param name="RetiredAt">When retired.</param>
/// <param name="RetiredReason">Why.</param>
/// <param name="Version">The ETag's value; incremented by every change.</param>
/// <param name="CreatedAt">Recorded at.</param>
/// <param name="CreatedBy">Recorded by.</param>
/// <param name="UpdatedAt">Last changed at.</param>
/// <param name="UpdatedBy">Last changed by.</param>
public sealed record ReferenceStandardDto(long Id, string Identity, string Kind, string Description, double NominalFrequencyHz,
    ReferenceCalibrationDto Calibration, DateTimeOffset DueDate, string Status, bool Usable, DateTimeOffset? RetiredAt, string? RetiredReason,
    long Version, DateTimeOffset CreatedAt, string CreatedBy, DateTimeOffset UpdatedAt, string UpdatedBy);

/// <summary>Why a record is retired.</summary>
/// <param name="Reason">1 to 1000 characters.</param>
public sealed record RetireRequest(string? Reason);
