namespace CalBudget.Api.Analytics;

/// <summary>Readings to analyse.</summary>
/// <param name="DataType">"frequency" (fractional frequency y_i) or "phase" (time error x_i, seconds).</param>
/// <param name="Tau0">Sampling interval in seconds, &gt; 0.</param>
/// <param name="Values">The readings; null marks a gap.</param>
/// <param name="Statistics">Any of adev, oadev, mdev, tdev, hdev, ohdev, totdev.</param>
/// <param name="AveragingFactors">m values (tau = m tau0), each &gt;= 1; absent: octaves 1, 2, 4 ... up to each statistic's largest.</param>
public sealed record StabilityRequest(string? DataType, double? Tau0, double?[]? Values, IReadOnlyList<string>? Statistics, IReadOnlyList<int>? AveragingFactors);

/// <summary>One point of a curve.</summary>
/// <param name="AveragingFactor">m.</param>
/// <param name="Tau">m tau0, seconds.</param>
/// <param name="Deviation">The deviation (TDEV in seconds, the others dimensionless).</param>
/// <param name="Count">Terms averaged.</param>
/// <param name="DegreesOfFreedom">Equivalent degrees of freedom for the noise at this tau.</param>
/// <param name="Interval">68.3 % chi-squared confidence interval [low, high] of the deviation.</param>
public sealed record StabilityPointDto(int AveragingFactor, double Tau, double Deviation, int Count, double DegreesOfFreedom, double[] Interval);

/// <summary>The identified noise at one tau.</summary>
/// <param name="AveragingFactor">m.</param>
/// <param name="Tau">m tau0.</param>
/// <param name="Alpha">Exponent of S_y(f) ~ f^alpha, or null when too few points remain.</param>
/// <param name="Type">white PM, flicker PM, white FM, flicker FM, random-walk FM (Hadamard also flicker walk FM, random run FM), or "not identified".</param>
public sealed record NoiseDto(int AveragingFactor, double Tau, int? Alpha, string Type);

/// <summary>The curves by statistic name, and the noise by tau.</summary>
/// <param name="Results">statistic name to its points (a point that cannot be computed is left out).</param>
/// <param name="Noise">By tau, ascending.</param>
public sealed record StabilityResponse(IReadOnlyDictionary<string, StabilityPointDto[]> Results, NoiseDto[] Noise);
