namespace CalBudget.Reports;

/// <summary>
/// Everything a certificate states, already worded and rounded for statement (invariant culture). It is stored with the
/// certificate as its snapshot: rendering the same content again gives the same text.
/// </summary>
public sealed record CertificateContent
{
    /// <summary>The certificate number.</summary>
    public required string Number { get; init; }

    /// <summary>The title, for example "Certificate of calibration".</summary>
    public required string Title { get; init; }

    /// <summary>The laboratory's name.</summary>
    public required string LabName { get; init; }

    /// <summary>Its address, one line each.</summary>
    public required IReadOnlyList<string> LabAddress { get; init; }

    /// <summary>Label and value pairs of the first table: customer, item, identification, condition, dates.</summary>
    public required IReadOnlyList<Field> Particulars { get; init; }

    /// <summary>Paragraphs of the method.</summary>
    public required IReadOnlyList<string> Method { get; init; }

    /// <summary>The reference standards used, one line each, and how traceability is achieved.</summary>
    public required IReadOnlyList<string> Traceability { get; init; }

    /// <summary>The environment during calibration.</summary>
    public required IReadOnlyList<string> Environment { get; init; }

    /// <summary>The posture of calibration.</summary>
    public required PostureStatement Posture { get; init; }

    /// <summary>Results as found and as left.</summary>
    public required IReadOnlyList<ResultLine> Results { get; init; }

    /// <summary>The statement of uncertainty in words (U, k, coverage probability).</summary>
    public required string UncertaintyStatement { get; init; }

    /// <summary>The budget table's rows.</summary>
    public required IReadOnlyList<BudgetRow> Budget { get; init; }

    /// <summary>The budget's combined and expanded lines under the table.</summary>
    public required IReadOnlyList<string> BudgetSummary { get; init; }

    /// <summary>The in-use prediction, labelled as such, when the budget has one.</summary>
    public IReadOnlyList<string>? Prediction { get; init; }

    /// <summary>The decision rule and the outcome, when a statement of conformity was asked for.</summary>
    public IReadOnlyList<string>? Conformity { get; init; }

    /// <summary>The recall interval and its method, when the customer asked for it.</summary>
    public IReadOnlyList<string>? Recall { get; init; }

    /// <summary>The Allan deviation of the run.</summary>
    public required StabilityPlot Stability { get; init; }

    /// <summary>The instrument's history of results.</summary>
    public required DriftPlot Drift { get; init; }

    /// <summary>Who authorised the result, in what role, when, and what the signature means.</summary>
    public required IReadOnlyList<string> Authorisation { get; init; }

    /// <summary>The statements every certificate carries (it relates only to the item calibrated, ...).</summary>
    public required IReadOnlyList<string> Statements { get; init; }

    /// <summary>The amendment note when this certificate replaces another.</summary>
    public string? Amendment { get; init; }

    /// <summary>The page footer's caution line.</summary>
    public required string Footer { get; init; }
}

/// <summary>A label and its value.</summary>
public sealed record Field(string Label, string Value);

/// <summary>The calibration posture and what the other postures of the instrument do to the result.</summary>
/// <param name="Words">The posture in words, with its up vector in the body frame.</param>
/// <param name="Up">The up vector (x right, y to the rear, z up through the top cover).</param>
/// <param name="Frame">How the body frame is defined.</param>
/// <param name="Others">The lab's other postures for the instrument and the shift each is expected to give.</param>
/// <param name="Basis">Where the acceleration sensitivity came from.</param>
public sealed record PostureStatement(string Words, double[] Up, string Frame, IReadOnlyList<Field> Others, string Basis);

/// <summary>One stated result.</summary>
/// <param name="Condition">"as found" or "as left".</param>
/// <param name="Quantity">What is stated, for example "fractional frequency offset (f - f0) / f0".</param>
/// <param name="Value">The value with its expanded uncertainty, rounded for statement.</param>
/// <param name="Note">What else applies (no adjustment made, ...).</param>
public sealed record ResultLine(string Condition, string Quantity, string Value, string Note);

/// <summary>One line of the budget table, worded.</summary>
public sealed record BudgetRow(string Name, string Distribution, string StandardUncertainty, string Sensitivity, string Contribution, string DegreesOfFreedom, string Share);

/// <summary>The Allan deviation points to plot with their 68.3 % intervals.</summary>
public sealed record StabilityPlot(string Title, double[] Tau, double[] Deviation, double[] Low, double[] High, string Note);

/// <summary>The dated results to plot (days from the first), with U, and the fitted line when there is one.</summary>
public sealed record DriftPlot(string Title, double[] Days, double[] Offset, double[] ExpandedUncertainty, double[]? FitDays, double[]? FitOffset, string AxisLabel, string Note);
