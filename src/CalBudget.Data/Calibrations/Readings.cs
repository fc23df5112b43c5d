namespace CalBudget.Data.Calibrations;

/// <summary>What the readings of an upload give: frequencies (Hz) or fractional frequency offsets.</summary>
public static class ReadingQuantities
{
    /// <summary>Readings of the instrument's frequency, Hz.</summary>
    public const string FrequencyHz = "frequencyHz";

    /// <summary>Readings of the fractional frequency offset (f - f0) / f0.</summary>
    public const string FractionalOffset = "fractionalOffset";
}

/// <summary>One reading of a run.</summary>
/// <param name="AtTicks">When it was taken: UTC, 100 ns units since 1970-01-01T00:00:00Z (see <see cref="ReadingTime"/>).</param>
/// <param name="FractionalOffset">(f - f0) / f0, dimensionless.</param>
/// <param name="FrequencyHz">The frequency read, Hz, when the upload gave frequencies.</param>
/// <param name="GateTimeSeconds">Its own gate time when the upload gave one, s.</param>
public readonly record struct Reading(long AtTicks, double FractionalOffset, double? FrequencyHz, double? GateTimeSeconds);

/// <summary>The time scale of <see cref="Reading.AtTicks"/>.</summary>
public static class ReadingTime
{
    /// <summary>Ticks since the Unix epoch of a time.</summary>
    public static long ToTicks(DateTimeOffset time) => time.UtcTicks - DateTimeOffset.UnixEpoch.UtcTicks;

    /// <summary>The time of a tick count.</summary>
    public static DateTimeOffset FromTicks(long ticks) => new(DateTimeOffset.UnixEpoch.UtcTicks + ticks, TimeSpan.Zero);
}

/// <summary>A stored upload of readings.</summary>
/// <param name="Id">Its id.</param>
/// <param name="RunId">The run.</param>
/// <param name="SupersedesId">The upload it corrects, or null for the first.</param>
/// <param name="Reason">Why it corrects that one (required for a correction).</param>
/// <param name="MediaType">As received: text/csv or application/json.</param>
/// <param name="Quantity">One of <see cref="ReadingQuantities"/>.</param>
/// <param name="ByteCount">Size of the bytes as received.</param>
/// <param name="Sha256">SHA-256 of those bytes, lowercase hex.</param>
/// <param name="Count">Readings parsed from them.</param>
/// <param name="FirstAt">Time of the first reading.</param>
/// <param name="LastAt">Time of the last reading.</param>
/// <param name="UploadedAt">When.</param>
/// <param name="UploadedBy">By whom.</param>
public sealed record ReadingUpload(long Id, long RunId, long? SupersedesId, string? Reason, string MediaType, string Quantity, long ByteCount,
    string Sha256, long Count, DateTimeOffset? FirstAt, DateTimeOffset? LastAt, DateTimeOffset UploadedAt, string UploadedBy);
