namespace CalBudget.Core.Gum;

/// <summary>The probability distributions a budget input can be given (JCGM 100:2008 4.3; JCGM 101:2008 6.4).</summary>
public enum DistributionKind
{
    /// <summary>Gaussian; u from a stated standard uncertainty, or U/k (JCGM 100 4.3.3).</summary>
    Normal,
    /// <summary>Uniform on [x - a, x + a]; u = a / sqrt(3) (JCGM 100 4.3.7).</summary>
    Rectangular,
    /// <summary>Symmetric triangular on [x - a, x + a]; u = a / sqrt(6) (JCGM 100 4.3.9).</summary>
    Triangular,
    /// <summary>Arcsine (U-shaped) on [x - a, x + a]; u = a / sqrt(2) (JCGM 101 6.4.6).</summary>
    UShaped,
    /// <summary>Scaled and shifted Student's t with scale s and nu degrees of freedom (JCGM 101 6.4.9).</summary>
    StudentT,
    /// <summary>
    /// The frequency shift Gamma . (u - c) of an instrument whose posture u is uniform (by area) within a tilt angle of the
    /// calibration posture c: asymmetric, from the geometry. The deviation about its mean is what is sampled.
    /// </summary>
    Orientation,
}
