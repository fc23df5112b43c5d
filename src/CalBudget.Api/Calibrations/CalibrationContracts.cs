using System.Text.Json;

namespace CalBudget.Api.Calibrations;

/// <summary>A calibration run as written by a client (create, or full replacement with If-Match). The operator is the caller.</summary>
/// <param name="InstrumentId">The instrument calibrated (active).</param>
/// <param name="ReferenceId">The reference standard compared against; it must be in calibration and not retired (else 409).</param>
/// <param name="Comparator">The comparator (counter) and its resolution.</param>
/// <param name="GateTimeSeconds">Gate time of one reading, s, &gt; 0.</param>
/// <param name="Posture">The instrument's posture during the run.</param>
/// <param name="Environment">The conditions of the run.</param>
/// <param name="Condition">"as-found" or "as-left".</param>
/// <param name="StartedAt">Start of the run (RFC 3339).</param>
/// <param name="EndedAt">End of the run (RFC 3339), after the start, when known.</param>
/// <param name="Notes">Free text, up to 4000 characters.</param>
/// <param name="WarmUpMinutes">How long the instrument had been powered when the run started, minutes (&gt;= 0), when recorded; a template's warm-up line compares it with the specified warm-up.</param>
public sealed record CalibrationRunRequest(long? InstrumentId, long? ReferenceId, ComparatorDto? Comparator, double? GateTimeSeconds, RunPostureDto? Posture,
    EnvironmentDto? Environment, string? Condition, DateTimeOffset? StartedAt, DateTimeOffset? EndedAt, string? Notes, double? WarmUpMinutes = null);

/// <summary>The comparator.</summary>
/// <param name="Name">What it is, for example "lab counter C-3".</param>
/// <param name="Resolution">Its quantization step at the run's gate time, as a fractional frequency (dimensionless, &gt; 0): the last-digit step of one reading.</param>
/// <param name="SystematicError">Its stated systematic error (trigger level, interpolator nonlinearity) as a fractional half-width (&gt;= 0), when specified; random trigger and interpolator noise is in the readings' scatter and is not given here.</param>
public sealed record ComparatorDto(string? Name, double? Resolution, double? SystematicError = null);

/// <summary>The posture: the name of one of the instrument's postures, or an explicit up vector (exactly one of the two).</summary>
/// <param name="Name">One of the instrument's posture names.</param>
/// <param name="Up">"+x" ... "-z" or [x, y, z] in the instrument's body frame (normalised; zero length is an error).</param>
public sealed record RunPostureDto(string? Name, JsonElement? Up);

/// <summary>The environment; each value optional.</summary>
/// <param name="TemperatureCelsius">Ambient temperature, degC (-50 to 100).</param>
/// <param name="TemperatureVariationKelvin">Its variation over the run (half range), K, &gt;= 0.</param>
/// <param name="RelativeHumidityPercent">Relative humidity, 0 to 100.</param>
/// <param name="Supply">The instrument's supply, as text.</param>
public sealed record EnvironmentDto(double? TemperatureCelsius, double? TemperatureVariationKelvin, double? RelativeHumidityPercent, string? Supply);

/// <summary>The posture as stored.</summary>
/// <param name="Name">The instrument's posture name, or null for an explicit vector.</param>
/// <param name="Up">Unit up vector [x, y, z] in the body frame.</param>
public sealed record StoredRunPostureDto(string? Name, double[] Up);

/// <summary>The current readings of a run.</summary>
/// <param name="UploadId">The newest upload (the one in force).</param>
/// <param name="Count">How many readings it holds.</param>
/// <param name="Sha256">SHA-256 of its bytes as received, lowercase hex.</param>
/// <param name="Uploads">How many uploads there are, corrections included.</param>
public sealed record RunReadingsDto(long UploadId, long Count, string Sha256, long Uploads);

/// <summary>A stored calibration run.</summary>
/// <param name="Id">Its id.</param>
/// <param name="InstrumentId">The instrument.</param>
/// <param name="InstrumentAssetNumber">Its asset number.</param>
/// <param name="ReferenceId">The reference standard.</param>
/// <param name="ReferenceIdentity">Its identity.</param>
/// <param name="Comparator">The comparator.</param>
/// <param name="GateTimeSeconds">Gate time, s.</param>
/// <param name="Posture">The posture.</param>
/// <param name="Environment">The environment.</param>
/// <param name="Condition">as-found or as-left.</param>
/// <param name="Operator">Who made the run (the key or user that recorded it).</param>
/// <param name="StartedAt">Start.</param>
/// <param name="EndedAt">End.</param>
/// <param name="Notes">Notes.</param>
/// <param name="Readings">The readings in force, or null before the first upload.</param>
/// <param name="Status">"active" or "retired".</param>
/// <param name="RetiredAt">When retired.</param>
/// <param name="RetiredReason">Why.</param>
/// <param name="Version">The ETag's value.</param>
/// <param name="CreatedAt">Recorded at.</param>
/// <param name="CreatedBy">Recorded by.</param>
/// <param name="UpdatedAt">Last changed at.</param>
/// <param name="UpdatedBy">Last changed by.</param>
/// <param name="WarmUpMinutes">Power-on time before the run, minutes, when recorded.</param>
public sealed record CalibrationRunDto(long Id, long InstrumentId, string InstrumentAssetNumber, long ReferenceId, string ReferenceIdentity,
    ComparatorDto Comparator, double GateTimeSeconds, StoredRunPostureDto Posture, EnvironmentDto Environment, string Condition, string Operator,
    DateTimeOffset StartedAt, DateTimeOffset? EndedAt, string Notes, RunReadingsDto? Readings, string Status, DateTimeOffset? RetiredAt,
    string? RetiredReason, long Version, DateTimeOffset CreatedAt, string CreatedBy, DateTimeOffset UpdatedAt, string UpdatedBy, double? WarmUpMinutes);

/// <summary>An upload of readings as stored.</summary>
/// <param name="Id">Its id.</param>
/// <param name="RunId">The run.</param>
/// <param name="SupersedesId">The upload it corrects, or null for the first.</param>
/// <param name="Reason">Why it corrects that one.</param>
/// <param name="MediaType">As received: text/csv or application/json.</param>
/// <param name="Quantity">"frequencyHz" or "fractionalOffset": what the readings gave.</param>
/// <param name="ByteCount">Size as received.</param>
/// <param name="Sha256">SHA-256 of the bytes as received, lowercase hex.</param>
/// <param name="Count">Readings parsed.</param>
/// <param name="FirstTimestamp">The first reading's time.</param>
/// <param name="LastTimestamp">The last reading's time.</param>
/// <param name="UploadedAt">When.</param>
/// <param name="UploadedBy">By whom.</param>
public sealed record ReadingUploadDto(long Id, long RunId, long? SupersedesId, string? Reason, string MediaType, string Quantity, long ByteCount,
    string Sha256, long Count, DateTimeOffset? FirstTimestamp, DateTimeOffset? LastTimestamp, DateTimeOffset UploadedAt, string UploadedBy);

/// <summary>One reading, as uploaded in JSON and as returned.</summary>
/// <param name="Timestamp">When it was taken (RFC 3339).</param>
/// <param name="FrequencyHz">The frequency read, Hz (give this or fractionalOffset, the same one on every reading).</param>
/// <param name="FractionalOffset">The fractional frequency offset (f - f0) / f0; in answers always present.</param>
/// <param name="GateTimeSeconds">Its own gate time, s, when it differs from the run's.</param>
public sealed record ReadingDto(DateTimeOffset? Timestamp, double? FrequencyHz, double? FractionalOffset, double? GateTimeSeconds);

/// <summary>A JSON upload of readings.</summary>
/// <param name="Readings">In time order, timestamps strictly increasing.</param>
public sealed record ReadingsUploadRequest(IReadOnlyList<ReadingDto>? Readings);

/// <summary>The parsed table of an upload, as JSON.</summary>
/// <param name="RunId">The run.</param>
/// <param name="UploadId">The upload.</param>
/// <param name="Sha256">SHA-256 of the upload as received.</param>
/// <param name="Quantity">What the readings gave.</param>
/// <param name="Count">How many.</param>
/// <param name="Readings">The readings in time order.</param>
public sealed record ReadingsTableDto(long RunId, long UploadId, string Sha256, string Quantity, long Count, IReadOnlyList<ReadingDto> Readings);
