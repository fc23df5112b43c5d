namespace CalBudget.Core.Gum;

/// <summary>
/// One input quantity X_i of the additive model Y = sum(c_i X_i): its estimate x_i, sensitivity coefficient c_i
/// (JCGM 100 5.1.3), distribution and degrees of freedom nu_i.
/// </summary>
public sealed record Contribution
{
    private Contribution(string name, double estimate, double sensitivity, InputDistribution distribution, EvaluationType type, double degreesOfFreedom)
    {
        Name = name;
        Estimate = estimate;
        Sensitivity = sensitivity;
        Distribution = distribution;
        Type = type;
        DegreesOfFreedom = degreesOfFreedom;
    }

    /// <summary>Unique name of the input within its budget.</summary>
    public string Name { get; }

    /// <summary>Estimate x_i in the input's unit; finite.</summary>
    public double Estimate { get; }

    /// <summary>Sensitivity coefficient c_i = dY/dX_i; finite.</summary>
    public double Sensitivity { get; }

    /// <summary>Distribution of X_i about x_i.</summary>
    public InputDistribution Distribution { get; }

    /// <summary>Type A or Type B evaluation.</summary>
    public EvaluationType Type { get; }

    /// <summary>Degrees of freedom nu_i &gt; 0 of u(x_i), <see cref="double.PositiveInfinity"/> when the uncertainty is taken as exactly known.</summary>
    public double DegreesOfFreedom { get; }

    /// <summary>Standard uncertainty u(x_i).</summary>
    public double StandardUncertainty => Distribution.StandardUncertainty;

    /// <summary>|c_i| u(x_i), the contribution to u_c (JCGM 100 5.1.3, eq. 11b).</summary>
    public double UncertaintyContribution => Math.Abs(Sensitivity) * Distribution.StandardUncertainty;

    /// <summary>
    /// An orientation contribution: postures of use uniform within <paramref name="tiltDegrees"/> of the calibration
    /// posture; its estimate is the mean shift (a correction), its distribution the geometry's.
    /// </summary>
    public static Contribution ForOrientation(string name, Orientation.Vector3D gamma, Orientation.Posture calibration, double tiltDegrees)
    {
        var distribution = InputDistribution.OrientationWithinTilt(gamma, calibration, tiltDegrees);
        return Create(name, distribution, estimate: distribution.MeanShift);
    }

    /// <summary>
    /// Creates a contribution. <paramref name="degreesOfFreedom"/> null means infinite; for a Student's t input it
    /// defaults to the distribution's own degrees of freedom.
    /// </summary>
    public static Contribution Create(string name, InputDistribution distribution, double estimate = 0, double sensitivity = 1,
        EvaluationType type = EvaluationType.B, double? degreesOfFreedom = null)
    {
        ArgumentNullException.ThrowIfNull(distribution);
        if (string.IsNullOrWhiteSpace(name))
        {
            throw new MetrologyException("name", "Each contribution needs a non-empty name.");
        }

        if (!double.IsFinite(estimate))
        {
            throw new MetrologyException("estimate", "estimate must be a finite number.");
        }

        if (!double.IsFinite(sensitivity))
        {
            throw new MetrologyException("sensitivity", "sensitivity must be a finite number.");
        }

        double nu = degreesOfFreedom
            ?? (distribution.Kind == DistributionKind.StudentT ? distribution.ShapeDegreesOfFreedom : double.PositiveInfinity);
        InputDistribution.Positive(nu, "degreesOfFreedom");
        return new Contribution(name.Trim(), estimate, sensitivity, distribution, type, nu);
    }
}
