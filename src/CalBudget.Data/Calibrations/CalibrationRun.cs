namespace CalBudget.Data.Calibrations;

/// <summary>Whether a run measured the instrument as it came in or as it leaves (after adjustment).</summary>
public static class RunConditions
{
    /// <summary>Every condition, as stored and as the API names them.</summary>
    public static IReadOnlyList<string> All { get; } = ["as-found", "as-left"];
}

/// <summary>The environment a run was made in. Absent values were not recorded.</summary>
/// <param name="TemperatureCelsius">Ambient temperature, degC.</param>
/// <param name="TemperatureVariationKelvin">Its variation over the run (half range), K, &gt;= 0.</param>
/// <param name="RelativeHumidityPercent">Relative humidity, 0 to 100 %.</param>
/// <param name="Supply">The instrument's supply, as text ("230 V 50 Hz mains").</param>
public sealed record RunEnvironment(double? TemperatureCelsius, double? TemperatureVariationKelvin, double? RelativeHumidityPercent, string Supply);

/// <summary>What a client writes about a calibration run.</summary>
/// <param name="InstrumentId">The instrument calibrated.</param>
/// <param name="ReferenceId">The reference standard compared against.</param>
/// <param name="Comparator">The comparator (counter) used, as text.</param>
/// <param name="ComparatorResolution">Its resolution at the gate time, as a fractional frequency (&gt; 0).</param>
/// <param name="GateTimeSeconds">Gate (averaging) time of one reading, s.</param>
/// <param name="PostureName">The instrument's posture used, or null when an explicit up vector was given.</param>
/// <param name="UpX">Unit up vector in the body frame, x.</param>
/// <param name="UpY">y.</param>
/// <param name="UpZ">z.</param>
/// <param name="Environment">The conditions.</param>
/// <param name="Condition">One of <see cref="RunConditions.All"/>.</param>
/// <param name="StartedAt">Start of the run, UTC.</param>
/// <param name="EndedAt">End of the run, UTC, when known.</param>
/// <param name="Notes">Free text.</param>
/// <param name="WarmUpMinutes">How long the instrument had been powered when the run started, minutes, when recorded.</param>
/// <param name="ComparatorSystematic">The comparator's stated systematic error (trigger level, interpolator nonlinearity), fractional half-width, when specified.</param>
public sealed record CalibrationRunFields(long InstrumentId, long ReferenceId, string Comparator, double ComparatorResolution, double GateTimeSeconds,
    string? PostureName, double UpX, double UpY, double UpZ, RunEnvironment Environment, string Condition, DateTimeOffset StartedAt,
    DateTimeOffset? EndedAt, string Notes, double? WarmUpMinutes = null, double? ComparatorSystematic = null);

/// <summary>The newest upload of a run's readings, in summary.</summary>
/// <param name="UploadId">Its id.</param>
/// <param name="Count">How many readings.</param>
/// <param name="Sha256">SHA-256 of the bytes as received, lowercase hex.</param>
/// <param name="Uploads">How many uploads the run has (corrections included).</param>
public sealed record ReadingsSummary(long UploadId, long Count, string Sha256, long Uploads);

/// <summary>A stored calibration run.</summary>
/// <param name="Id">Its id.</param>
/// <param name="Fields">What it is.</param>
/// <param name="Operator">Who made it (the key or user that recorded it).</param>
/// <param name="InstrumentAssetNumber">The instrument's asset number, for display.</param>
/// <param name="ReferenceIdentity">The reference's identity, for display.</param>
/// <param name="Readings">The current readings, or null before any upload.</param>
/// <param name="Version">Incremented by every change; the ETag.</param>
/// <param name="RetiredAt">When retired.</param>
/// <param name="RetiredReason">Why.</param>
/// <param name="CreatedAt">Recorded at.</param>
/// <param name="CreatedBy">By whom.</param>
/// <param name="UpdatedAt">Last change.</param>
/// <param name="UpdatedBy">By whom.</param>
public sealed record CalibrationRun(long Id, CalibrationRunFields Fields, string Operator, string InstrumentAssetNumber, string ReferenceIdentity,
    ReadingsSummary? Readings, long Version, DateTimeOffset? RetiredAt, string? RetiredReason, DateTimeOffset CreatedAt, string CreatedBy,
    DateTimeOffset UpdatedAt, string UpdatedBy) : IVersionedRecord;
