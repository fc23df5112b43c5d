using System.Text.Json;

namespace CalBudget.Api.Instruments;

/// <summary>An instrument as written by a client (create, or full replacement with If-Match).</summary>
/// <param name="AssetNumber">Unique, 1 to 100 characters.</param>
/// <param name="Customer">Whose instrument it is, 1 to 200 characters.</param>
/// <param name="Manufacturer">Free text.</param>
/// <param name="Model">Free text.</param>
/// <param name="SerialNumber">Free text.</param>
/// <param name="Description">Free text, up to 1000 characters.</param>
/// <param name="Timebase">Its timebase.</param>
/// <param name="Postures">The postures the lab uses with it, names unique, at most 50.</param>
public sealed record InstrumentRequest(string? AssetNumber, string? Customer, string? Manufacturer, string? Model, string? SerialNumber,
    string? Description, TimebaseDto? Timebase, IReadOnlyList<PostureDto>? Postures);

/// <summary>The timebase.</summary>
/// <param name="OscillatorKind">XO, TCXO, OCXO, rubidium, GNSS-disciplined or other.</param>
/// <param name="NominalFrequencyHz">Nominal frequency in Hz, &gt; 0.</param>
/// <param name="Specification">The manufacturer's specification, all fractional (dimensionless) unless named otherwise.</param>
public sealed record TimebaseDto(string? OscillatorKind, double? NominalFrequencyHz, TimebaseSpecificationDto? Specification);

/// <summary>The timebase specification.</summary>
/// <param name="Tolerance">Limits on the fractional frequency offset, with the conditions they hold under.</param>
/// <param name="AgingPerDay">Aging rate per day.</param>
/// <param name="AgingPerYear">Aging per year.</param>
/// <param name="TemperatureCoefficientPerKelvin">Fractional frequency change per kelvin.</param>
/// <param name="TemperatureRangeCelsius">The operating range the coefficient holds over.</param>
/// <param name="AccelerationSensitivityPerG">|Gamma| per g, if specified.</param>
/// <param name="WarmUpMinutes">Warm-up time.</param>
/// <param name="Retrace">Retrace after a power cycle (fractional).</param>
public sealed record TimebaseSpecificationDto(ToleranceDto? Tolerance, double? AgingPerDay, double? AgingPerYear, double? TemperatureCoefficientPerKelvin,
    RangeDto? TemperatureRangeCelsius, double? AccelerationSensitivityPerG, double? WarmUpMinutes, double? Retrace);

/// <summary>Tolerance limits; one-sided when one limit is absent.</summary>
/// <param name="Lower">Lower limit of y.</param>
/// <param name="Upper">Upper limit of y.</param>
/// <param name="Conditions">For example "one year after calibration, 23 +/- 5 degC".</param>
public sealed record ToleranceDto(double? Lower, double? Upper, string? Conditions);

/// <summary>A range.</summary>
/// <param name="Min">Low end.</param>
/// <param name="Max">High end.</param>
public sealed record RangeDto(double? Min, double? Max);

/// <summary>A named posture.</summary>
/// <param name="Name">For example "standing on its feet", "stand extended", "on its left side".</param>
/// <param name="Up">Up vector in the body frame: "+x" ... "-z" or [x, y, z] (normalised).</param>
public sealed record PostureDto(string? Name, JsonElement? Up);

/// <summary>A named posture as stored.</summary>
/// <param name="Name">Its name.</param>
/// <param name="Up">Unit up vector [x, y, z].</param>
public sealed record StoredPostureDto(string Name, double[] Up);

/// <summary>A stored instrument.</summary>
/// <param name="Id">Its id.</param>
/// <param name="AssetNumber">Asset number.</param>
/// <param name="Customer">Customer.</param>
/// <param name="Manufacturer">Manufacturer.</param>
/// <param name="Model">Model.</param>
/// <param name="SerialNumber">Serial number.</param>
/// <param name="Description">Description.</param>
/// <param name="Timebase">The timebase and its specification.</param>
/// <param name="BodyFrame">The frame postures are expressed in.</param>
/// <param name="Postures">The postures the lab uses.</param>
/// <param name="Status">"active" or "retired".</param>
/// <param name="RetiredAt">When retired.</param>
/// <param name="RetiredReason">Why.</param>
/// <param name="Version">The ETag's value.</param>
/// <param name="CreatedAt">Recorded at.</param>
/// <param name="CreatedBy">Recorded by.</param>
/// <param name="UpdatedAt">Last changed at.</param>
/// <param name="UpdatedBy">Last changed by.</param>
/// <param name="RecentCalibrations">On reading one instrument: its newest calibration runs (at most 10, newest first; the rest with
/// GET /api/v1/calibrations?instrumentId=). Null in lists and in the answers to changes.</param>
public sealed record InstrumentDto(long Id, string AssetNumber, string Customer, string Manufacturer, string Model, string SerialNumber, string Description,
    TimebaseDto Timebase, string BodyFrame, IReadOnlyList<StoredPostureDto> Postures, string Status, DateTimeOffset? RetiredAt, string? RetiredReason,
    long Version, DateTimeOffset CreatedAt, string CreatedBy, DateTimeOffset UpdatedAt, string UpdatedBy,
    IReadOnlyList<CalBudget.Api.Calibrations.CalibrationRunDto>? RecentCalibrations = null);
