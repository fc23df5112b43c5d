namespace CalBudget.Api.Budgets;

/// <summary>A budget to evaluate: the additive model y = sum(c_i x_i).</summary>
/// <param name="Measurand">What is measured, in words; default "fractional frequency offset".</param>
/// <param name="CoverageProbability">p in (0, 1) for U and the intervals; default 0.9545.</param>
/// <param name="Contributions">The inputs, at least one, names unique.</param>
/// <param name="Correlations">Correlation coefficients between pairs of named inputs; unstated pairs are uncorrelated.</param>
/// <param name="MonteCarlo">Present to run JCGM 101 Monte Carlo as well.</param>
public sealed record EvaluateRequest(
    string? Measurand,
    double? CoverageProbability,
    IReadOnlyList<ContributionRequest>? Contributions,
    IReadOnlyList<CorrelationRequest>? Correlations,
    MonteCarloRequest? MonteCarlo);

/// <summary>One input. Which uncertainty fields apply depends on <see cref="Distribution"/>.</summary>
/// <param name="Name">Unique within the budget.</param>
/// <param name="Estimate">x_i; default 0.</param>
/// <param name="Sensitivity">c_i; default 1.</param>
/// <param name="Distribution">normal (standardUncertainty, or expandedUncertainty with coverageFactor); rectangular, triangular, u-shaped (halfWidth or standardUncertainty); student-t (standardUncertainty as the scale, and degreesOfFreedom).</param>
/// <param name="StandardUncertainty">u(x_i), &gt;= 0.</param>
/// <param name="ExpandedUncertainty">U, &gt;= 0, with coverageFactor (normal only).</param>
/// <param name="CoverageFactor">k &gt; 0 of expandedUncertainty.</param>
/// <param name="HalfWidth">a &gt;= 0 of a bounded distribution.</param>
/// <param name="DegreesOfFreedom">nu_i &gt; 0; absent means infinite (for student-t, required and also its shape).</param>
/// <param name="Type">"A" or "B"; default "B".</param>
public sealed record ContributionRequest(
    string? Name,
    double? Estimate,
    double? Sensitivity,
    string? Distribution,
    double? StandardUncertainty,
    double? ExpandedUncertainty,
    double? CoverageFactor,
    double? HalfWidth,
    double? DegreesOfFreedom,
    string? Type);

/// <summary>A correlation coefficient between two inputs.</summary>
/// <param name="Between">The two inputs' names.</param>
/// <param name="Coefficient">r in [-1, 1].</param>
public sealed record CorrelationRequest(IReadOnlyList<string>? Between, double? Coefficient);

/// <summary>Monte Carlo settings.</summary>
/// <param name="Trials">M; absent runs the adaptive procedure (JCGM 101 7.9). At least ceil(100 / (1 - p)); at most the service's ceiling (422 beyond).</param>
/// <param name="Seed">Generator seed; absent picks one at random and returns it.</param>
public sealed record MonteCarloRequest(long? Trials, ulong? Seed);

/// <summary>The GUM evaluation, and the Monte Carlo one when asked.</summary>
/// <param name="Measurand">As given.</param>
/// <param name="Estimate">y.</param>
/// <param name="CombinedStandardUncertainty">u_c(y).</param>
/// <param name="EffectiveDegreesOfFreedom">Welch-Satterthwaite, unrounded; null when infinite.</param>
/// <param name="CoverageFactor">Student's t at p with nu_eff truncated (G.4.1); normal when infinite.</param>
/// <param name="ExpandedUncertainty">U = k u_c.</param>
/// <param name="CoverageProbability">p.</param>
/// <param name="Contributions">Each input's line.</param>
/// <param name="MonteCarlo">Present when asked for.</param>
public sealed record EvaluateResponse(
    string Measurand,
    double Estimate,
    double CombinedStandardUncertainty,
    double? EffectiveDegreesOfFreedom,
    double CoverageFactor,
    double ExpandedUncertainty,
    double CoverageProbability,
    IReadOnlyList<ContributionResponse> Contributions,
    MonteCarloResponse? MonteCarlo);

/// <summary>One input's line in the result.</summary>
/// <param name="Name">The input.</param>
/// <param name="StandardUncertainty">u(x_i).</param>
/// <param name="Sensitivity">c_i.</param>
/// <param name="Contribution">|c_i| u(x_i).</param>
/// <param name="VarianceShare">(c_i u(x_i))^2 / u_c^2, ignoring correlation terms.</param>
/// <param name="DegreesOfFreedom">nu_i; null when infinite.</param>
/// <param name="Type">"A" or "B".</param>
public sealed record ContributionResponse(string Name, double StandardUncertainty, double Sensitivity, double Contribution,
    double VarianceShare, double? DegreesOfFreedom, string Type);

/// <summary>The Monte Carlo result (JCGM 101).</summary>
/// <param name="Trials">M used.</param>
/// <param name="Estimate">Mean of the output values.</param>
/// <param name="StandardUncertainty">Their standard deviation.</param>
/// <param name="CoverageInterval">Probabilistically symmetric interval [low, high] (7.7.2).</param>
/// <param name="ShortestCoverageInterval">Shortest interval (7.7.3).</param>
/// <param name="GumValidated">JCGM 101 clause 8 with delta from two significant digits of u_c.</param>
/// <param name="NumericalTolerance">delta.</param>
/// <param name="ValidationDifferences">[d_low, d_high] of 8.2.</param>
/// <param name="Seed">The seed used, to reproduce the run.</param>
/// <param name="Adaptive">M was found by the adaptive procedure.</param>
/// <param name="Stabilized">The adaptive procedure reached its tolerance before the ceiling (always true for a fixed M).</param>
public sealed record MonteCarloResponse(long Trials, double Estimate, double StandardUncertainty, double[] CoverageInterval,
    double[] ShortestCoverageInterval, bool GumValidated, double NumericalTolerance, double[] ValidationDifferences,
    ulong Seed, bool Adaptive, bool Stabilized);
