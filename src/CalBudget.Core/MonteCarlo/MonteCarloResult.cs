namespace CalBudget.Core.MonteCarlo;

/// <summary>The result of a Monte Carlo propagation.</summary>
/// <param name="Trials">The number of trials M used.</param>
/// <param name="Estimate">The mean of the M output values.</param>
/// <param name="StandardUncertainty">Their standard deviation (JCGM 101 7.6).</param>
/// <param name="CoverageProbability">p of the intervals.</param>
/// <param name="CoverageInterval">The probabilistically symmetric 100p % interval (7.7.2).</param>
/// <param name="ShortestCoverageInterval">The shortest 100p % interval (7.7.3).</param>
/// <param name="Seed">The generator seed, to reproduce the run.</param>
/// <param name="Adaptive">True when M was found by the adaptive procedure of 7.9.</param>
/// <param name="Stabilized">For an adaptive run, whether every result stabilised within the numerical tolerance before the ceiling on M; true for a fixed M.</param>
/// <param name="Validation">The comparison with the GUM result (clause 8), when one was given.</param>
public sealed record MonteCarloResult(
    long Trials,
    double Estimate,
    double StandardUncertainty,
    double CoverageProbability,
    Interval CoverageInterval,
    Interval ShortestCoverageInterval,
    ulong Seed,
    bool Adaptive,
    bool Stabilized,
    GumValidation? Validation)
{
    /// <summary>The fraction of output values within <see cref="MonteCarloOptions.CountWithin"/>, when asked for.</summary>
    public double? FractionWithin { get; init; }
}

/// <summary>Validation of the GUM uncertainty framework against Monte Carlo (JCGM 101:2008 8.2).</summary>
/// <param name="NumericalTolerance">delta of 7.9.2 for u_c expressed to the stated significant digits.</param>
/// <param name="LowDifference">d_low = |y - U_p - y_low|.</param>
/// <param name="HighDifference">d_high = |y + U_p - y_high|.</param>
/// <param name="Validated">Both differences are no larger than delta.</param>
public sealed record GumValidation(double NumericalTolerance, double LowDifference, double HighDifference, bool Validated);
