namespace CalBudget.Core.Gum;

/// <summary>
/// The distribution of one input quantity about its estimate, normalised to its standard uncertainty.
/// Immutable; build it with the factories, which check that every parameter is finite and in range.
/// </summary>
/// <remarks>
/// For <see cref="DistributionKind.StudentT"/> the standard uncertainty is the scale s of the t-distribution
/// (the experimental standard deviation of the mean, JCGM 100 4.2.3), as the GUM propagates it; the Monte Carlo
/// samples x + s t_nu as JCGM 101 6.4.9.7 prescribes, whose standard deviation is s sqrt(nu / (nu - 2)) for nu &gt; 2.
/// </remarks>
public sealed record InputDistribution
{
    private InputDistribution(DistributionKind kind, double standardUncertainty, double halfWidth, double shapeDegreesOfFreedom)
    {
        Kind = kind;
        StandardUncertainty = standardUncertainty;
        HalfWidth = halfWidth;
        ShapeDegreesOfFreedom = shapeDegreesOfFreedom;
    }

    /// <summary>For <see cref="DistributionKind.Orientation"/>: Gamma . c (per g), |Gamma across c| and cos(tilt).</summary>
    internal (double Along, double Across, double CosTilt) Geometry { get; private init; }

    /// <summary>For <see cref="DistributionKind.Orientation"/>: the mean shift E[Gamma . (u - c)], the estimate such an input takes; 0 otherwise.</summary>
    public double MeanShift { get; private init; }

    /// <summary>The family of the distribution.</summary>
    public DistributionKind Kind { get; }

    /// <summary>Standard uncertainty u in the unit of the input, finite and &gt;= 0.</summary>
    public double StandardUncertainty { get; }

    /// <summary>Half-width a of a bounded distribution (rectangular, triangular, U-shaped); NaN for the others.</summary>
    public double HalfWidth { get; }

    /// <summary>Degrees of freedom that shape a Student's t input; NaN for the other kinds.</summary>
    public double ShapeDegreesOfFreedom { get; }

    /// <summary>Normal distribution from its standard uncertainty u (JCGM 100 4.3.3).</summary>
    public static InputDistribution NormalFromStandard(double standardUncertainty) =>
        new(DistributionKind.Normal, NonNegative(standardUncertainty, "standardUncertainty"), double.NaN, double.NaN);

    /// <summary>Normal distribution from an expanded uncertainty U and its coverage factor k: u = U / k (JCGM 100 4.3.4).</summary>
    public static InputDistribution NormalFromExpanded(double expandedUncertainty, double coverageFactor)
    {
        NonNegative(expandedUncertainty, "expandedUncertainty");
        Positive(coverageFactor, "coverageFactor");
        return new(DistributionKind.Normal, expandedUncertainty / coverageFactor, double.NaN, double.NaN);
    }

    /// <summary>Rectangular distribution of half-width a: u = a / sqrt(3) (JCGM 100 4.3.7, eq. 7).</summary>
    public static InputDistribution Rectangular(double halfWidth) => Bounded(DistributionKind.Rectangular, halfWidth, Math.Sqrt(3.0));

    /// <summary>Symmetric triangular distribution of half-width a: u = a / sqrt(6) (JCGM 100 4.3.9).</summary>
    public static InputDistribution Triangular(double halfWidth) => Bounded(DistributionKind.Triangular, halfWidth, Math.Sqrt(6.0));

    /// <summary>Arcsine (U-shaped) distribution of half-width a: u = a / sqrt(2) (JCGM 101 6.4.6).</summary>
    public static InputDistribution UShaped(double halfWidth) => Bounded(DistributionKind.UShaped, halfWidth, Math.Sqrt(2.0));

    /// <summary>A bounded distribution given by its standard uncertainty instead of its half-width: a = u times the kind's divisor.</summary>
    public static InputDistribution BoundedFromStandard(DistributionKind kind, double standardUncertainty)
    {
        NonNegative(standardUncertainty, "standardUncertainty");
        return kind switch
        {
            DistributionKind.Rectangular => Rectangular(standardUncertainty * Math.Sqrt(3.0)),
            DistributionKind.Triangular => Triangular(standardUncertainty * Math.Sqrt(6.0)),
            DistributionKind.UShaped => UShaped(standardUncertainty * Math.Sqrt(2.0)),
            _ => throw new MetrologyException("distribution", $"{kind} is not a bounded distribution."),
        };
    }

    /// <summary>Scaled and shifted Student's t with scale s (the standard uncertainty the GUM uses) and nu &gt; 0 degrees of freedom (JCGM 101 6.4.9).</summary>
    public static InputDistribution StudentT(double scale, double degreesOfFreedom)
    {
        NonNegative(scale, "standardUncertainty");
        Positive(degreesOfFreedom, "degreesOfFreedom");
        if (double.IsPositiveInfinity(degreesOfFreedom))
        {
            return NormalFromStandard(scale);
        }

        return new(DistributionKind.StudentT, scale, double.NaN, degreesOfFreedom);
    }

    /// <summary>
    /// The shift dy = Gamma . (u - c) when the posture u is uniform by area within <paramref name="tiltDegrees"/> of the
    /// calibration posture c. With a = Gamma . c, b = |Gamma - a c| and t = cos(angle) uniform on [cos theta, 1]:
    /// dy = a (t - 1) + b sqrt(1 - t^2) cos(phi), so E[dy] = -a (1 - cos theta) / 2 and
    /// Var[dy] = a^2 (1 - cos theta)^2 / 12 + b^2 (1 - E[t^2]) / 2 with E[t^2] = (1 + cos theta + cos^2 theta) / 3 (derived by hand).
    /// Its half-width (the largest |dy|) is <see cref="Orientation.OrientationShift.WithinTilt"/>'s.
    /// </summary>
    public static InputDistribution OrientationWithinTilt(Orientation.Vector3D gamma, Orientation.Posture calibration, double tiltDegrees)
    {
        var range = Orientation.OrientationShift.WithinTilt(gamma, calibration, tiltDegrees);
        double a = gamma.Dot(calibration.Up);
        double b = (gamma - a * calibration.Up).Length;
        double cosTheta = Math.Cos(tiltDegrees * Math.PI / 180);
        double meanT = (1 + cosTheta) / 2;
        double meanT2 = (1 + cosTheta + cosTheta * cosTheta) / 3;
        double variance = a * a * (1 - cosTheta) * (1 - cosTheta) / 12 + b * b * (1 - meanT2) / 2;
        return new InputDistribution(DistributionKind.Orientation, Math.Sqrt(Math.Max(variance, 0)), range.HalfWidth!.Value, double.NaN)
        {
            Geometry = (a, b, cosTheta),
            MeanShift = a * (meanT - 1),
        };
    }

    private static InputDistribution Bounded(DistributionKind kind, double halfWidth, double divisor)
    {
        NonNegative(halfWidth, "halfWidth");
        return new(kind, halfWidth / divisor, halfWidth, double.NaN);
    }

    internal static double NonNegative(double value, string name)
    {
        if (!double.IsFinite(value) || value < 0)
        {
            throw new MetrologyException(name, $"{name} must be a finite number >= 0 (got {value.ToString(System.Globalization.CultureInfo.InvariantCulture)}).");
        }

        return value;
    }

    internal static double Positive(double value, string name)
    {
        // Infinity is allowed here: it means "infinite degrees of freedom" where that makes sense.
        if (double.IsNaN(value) || value <= 0)
        {
            throw new MetrologyException(name, $"{name} must be > 0 (got {value.ToString(System.Globalization.CultureInfo.InvariantCulture)}).");
        }

        return value;
    }
}
