namespace CalBudget.Api.Analytics;

/// <summary>A dated fractional-frequency history to fit.</summary>
/// <param name="Model">"linear" (y = y0 + r t) or "logarithmic" (y = A ln(B t + 1) + y0, MIL-PRF-55310).</param>
/// <param name="Points">At least three (linear) or four (logarithmic) readings, times RFC 3339 UTC.</param>
/// <param name="PredictAt">Optional RFC 3339 time to predict the offset at.</param>
public sealed record AgingRequest(string? Model, IReadOnlyList<AgingPointDto>? Points, DateTimeOffset? PredictAt);

/// <summary>One reading of the history.</summary>
/// <param name="Time">When (RFC 3339).</param>
/// <param name="FractionalOffset">y then.</param>
/// <param name="StandardUncertainty">u(y) &gt; 0; weights 1/u^2 only when every point has one.</param>
public sealed record AgingPointDto(DateTimeOffset? Time, double? FractionalOffset, double? StandardUncertainty);

/// <summary>The fitted model; t counts days from the earliest point (origin).</summary>
/// <param name="Model">"linear" or "logarithmic".</param>
/// <param name="Origin">t = 0.</param>
/// <param name="Parameters">linear: offsetAtOrigin, ratePerDay; logarithmic: a, bPerDay, offsetAtOrigin.</param>
/// <param name="ParameterNames">The order of the covariance rows and columns.</param>
/// <param name="Covariance">Covariance of the parameters (taken as known when weighted, else scaled by the residual variance).</param>
/// <param name="ResidualStandardDeviation">Of the unweighted residuals.</param>
/// <param name="DegreesOfFreedom">n - number of parameters.</param>
/// <param name="Prediction">When predictAt was given.</param>
public sealed record AgingResponse(string Model, DateTimeOffset Origin, IReadOnlyDictionary<string, double> Parameters, string[] ParameterNames,
    double[][] Covariance, double ResidualStandardDeviation, int DegreesOfFreedom, AgingPredictionDto? Prediction);

/// <summary>A predicted offset.</summary>
/// <param name="Time">When.</param>
/// <param name="FractionalOffset">The model's value then.</param>
/// <param name="StandardUncertainty">From the parameter covariance.</param>
/// <param name="NewReadingStandardUncertainty">Also counting the residual scatter (what a new reading would show).</param>
public sealed record AgingPredictionDto(DateTimeOffset Time, double FractionalOffset, double StandardUncertainty, double NewReadingStandardUncertainty);
