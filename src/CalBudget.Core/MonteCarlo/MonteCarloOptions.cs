namespace CalBudget.Core.MonteCarlo;

/// <summary>How a Monte Carlo propagation (JCGM 101:2008) is run.</summary>
public sealed record MonteCarloOptions
{
    /// <summary>The default ceiling on the number of trials.</summary>
    public const long DefaultMaxTrials = 10_000_000;

    /// <summary>A fixed number of trials M; null runs the adaptive procedure of JCGM 101 7.9.</summary>
    public long? Trials { get; init; }

    /// <summary>Seed of the generator: the same seed gives the same result to the last digit, on any number of cores.</summary>
    public ulong Seed { get; init; }

    /// <summary>Ceiling on M (fixed or reached by the adaptive procedure); a fixed M above it is refused.</summary>
    public long MaxTrials { get; init; } = DefaultMaxTrials;

    /// <summary>Significant digits of u(y) that the numerical tolerance refers to (JCGM 101 7.9.2); 2 by default.</summary>
    public int SignificantDigits { get; init; } = 2;

    /// <summary>
    /// When set, the fraction of the M output values within these limits (either may be null for no limit) is counted:
    /// the Monte Carlo probability of conformity (JCGM 106:2012 7.4.3).
    /// </summary>
    public (double? Lower, double? Upper)? CountWithin { get; init; }

    /// <summary>Largest number of threads to use; null uses every core.</summary>
    public int? MaxDegreeOfParallelism { get; init; }

    /// <summary>Stops the run between chunks of trials (an <see cref="OperationCanceledException"/>), e.g. at a request's time limit.</summary>
    public CancellationToken Cancellation { get; init; }
}
