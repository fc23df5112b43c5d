using System.Text.Json;

namespace CalBudget.Api.Analytics;

/// <summary>Readings in several postures.</summary>
/// <param name="Observations">At least four, with up vectors that do not all lie in one plane.</param>
public sealed record SensitivityRequest(IReadOnlyList<PostureObservation>? Observations);

/// <summary>One posture and the offset measured in it.</summary>
/// <param name="Up">Direction opposite gravity in the body frame (+x right seen from the front, +y toward the rear, +z up through the top cover): "+x" ... "-z", or a vector [x, y, z] (normalised).</param>
/// <param name="FractionalOffset">y measured in that posture.</param>
/// <param name="StandardUncertainty">u(y) &gt; 0; weights are 1/u^2 only when every observation has one.</param>
public sealed record PostureObservation(JsonElement? Up, double? FractionalOffset, double? StandardUncertainty);

/// <summary>The fitted acceleration-sensitivity vector.</summary>
/// <param name="Gamma">[Gx, Gy, Gz] per g.</param>
/// <param name="Magnitude">|Gamma| per g.</param>
/// <param name="OffsetAtRest">y0 of y_k = y0 + Gamma . up_k.</param>
/// <param name="StandardUncertainty">Standard uncertainties of the components, or null (four unweighted postures leave no degrees of freedom).</param>
/// <param name="Covariance">3 x 3 covariance of Gamma, or null likewise.</param>
/// <param name="DegreesOfFreedom">n - 4.</param>
/// <param name="ReducedChiSquared">chi^2 / (n - 4) of a weighted fit (the Birge ratio squared); null when unweighted or n = 4.</param>
/// <param name="ScaledCovariance">The covariance to propagate: the residuals' (unweighted), or the weighted covariance times max(1, chi^2/nu); null when n = 4 leaves nothing to judge the scatter by.</param>
public sealed record SensitivityResponse(double[] Gamma, double Magnitude, double OffsetAtRest, double[]? StandardUncertainty, double[][]? Covariance, int DegreesOfFreedom,
    double? ReducedChiSquared = null, double[][]? ScaledCovariance = null);

/// <summary>The shift between postures: Gamma, the calibration posture, and exactly one of useUp, tiltLimitDegrees, anyOrientation.</summary>
/// <param name="Gamma">[Gx, Gy, Gz] per g.</param>
/// <param name="CalibrationUp">The calibration posture ("+z" or [x, y, z]).</param>
/// <param name="UseUp">A known posture of use.</param>
/// <param name="TiltLimitDegrees">Any posture within this angle (0 to 180) of the calibration posture.</param>
/// <param name="AnyOrientation">true: any posture at all.</param>
/// <param name="GammaCovariance">Optional 3 x 3 covariance of Gamma.</param>
public sealed record ShiftRequest(double[]? Gamma, JsonElement? CalibrationUp, JsonElement? UseUp, double? TiltLimitDegrees, bool? AnyOrientation, double[][]? GammaCovariance);

/// <summary>The shift.</summary>
/// <param name="Shift">dy = Gamma . (useUp - calibrationUp) for a known posture, else null.</param>
/// <param name="StandardUncertainty">From gammaCovariance (0 without it), at the known posture or at the worst posture of the range.</param>
/// <param name="HalfWidth">For a tilt limit or any orientation, the largest |dy| over the range (exact), else null.</param>
/// <param name="WorstUp">The posture where |dy| is largest (for a known posture, that posture).</param>
public sealed record ShiftResponse(double? Shift, double StandardUncertainty, double? HalfWidth, double[] WorstUp);
