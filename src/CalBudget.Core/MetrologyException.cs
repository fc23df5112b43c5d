namespace CalBudget.Core;

/// <summary>
/// Raised when an input is out of its domain or a result cannot be computed from valid inputs.
/// <see cref="Parameter"/> names the offending input in the terms of the model
/// (for example <c>contributions[2].halfWidth</c> or <c>correlations</c>), so callers can point at it.
/// </summary>
public sealed class MetrologyException : Exception
{
    /// <summary>Creates the exception for <paramref name="parameter"/>.</summary>
    public MetrologyException(string parameter, string message) : base(message) => Parameter = parameter;

    /// <summary>The input that is out of its domain, or the part of the model that cannot be computed.</summary>
    public string Parameter { get; }

    /// <summary>True when the inputs were individually valid but the result is not computable (for example a correlation matrix that is not positive semidefinite).</summary>
    public bool NotComputable { get; init; }
}
