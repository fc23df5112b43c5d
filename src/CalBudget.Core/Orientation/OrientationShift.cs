using CalBudget.Core.MonteCarlo;

namespace CalBudget.Core.Orientation;

/// <summary>The frequency shift between the calibration posture and a posture of use.</summary>
/// <param name="Shift">dy for a known posture of use, else null.</param>
/// <param name="StandardUncertainty">From the covariance of Gamma (0 without it): at the known posture, or at the worst posture of a range.</param>
/// <param name="HalfWidth">For a tilt limit or any orientation: the largest |dy| over the range, else null.</param>
/// <param name="WorstPosture">The posture where |dy| is largest (known posture: that posture).</param>
public sealed record ShiftResult(double? Shift, double StandardUncertainty, double? HalfWidth, Posture WorstPosture);

/// <summary>The distribution of dy = Gamma . (u - c) for postures u uniform by area within a tilt of the calibration posture c.</summary>
/// <param name="Mean">E[dy], the correction a prediction takes.</param>
/// <param name="GeometricStandardDeviation">The standard deviation of dy over the cap for Gamma as estimated.</param>
/// <param name="GammaStandardUncertainty">sqrt(E_u[(u - c)^T Sigma (u - c)]): what u(Gamma) adds, averaged over the cap (0 without Sigma).</param>
/// <param name="StandardUncertainty">sqrt of the sum of both squares.</param>
/// <param name="HalfWidth">The largest |dy| over the cap (<see cref="OrientationShift.WithinTilt"/>).</param>
public sealed record CapShift(double Mean, double GeometricStandardDeviation, double GammaStandardUncertainty, double StandardUncertainty, double HalfWidth);

/// <summary>
/// dy = Gamma . (up_use - up_cal). For a known posture of use, the shift and its uncertainty; for every posture within a tilt
/// angle of the calibration posture (180 degrees: any orientation), the largest |dy|, found exactly: Gamma . up over a
/// spherical cap is largest (smallest) at Gamma's own direction (its opposite) when that lies in the cap, else on the cap's
/// edge in the plane of Gamma and the cap's centre.
/// </summary>
public static class OrientationShift
{
    /// <summary>The shift from <paramref name="calibration"/> to <paramref name="use"/>; u = sqrt(d^T Sigma d), d = up_use - up_cal.</summary>
    public static ShiftResult Known(Vector3D gamma, Posture calibration, Posture use, double[,]? gammaCovariance = null)
    {
        CheckGamma(gamma);
        var d = use.Up - calibration.Up;
        return new ShiftResult(gamma.Dot(d), Uncertainty(d, gammaCovariance), null, use);
    }

    /// <summary>The largest |dy| over every posture within <paramref name="tiltDegrees"/> (0 to 180) of the calibration posture.</summary>
    public static ShiftResult WithinTilt(Vector3D gamma, Posture calibration, double tiltDegrees, double[,]? gammaCovariance = null)
    {
        CheckGamma(gamma);
        if (!double.IsFinite(tiltDegrees) || tiltDegrees < 0 || tiltDegrees > 180)
        {
            throw new MetrologyException("tiltLimitDegrees", "A tilt limit lies between 0 and 180 degrees.");
        }

        var c = calibration.Up;
        double theta = tiltDegrees * Math.PI / 180;
        double along = gamma.Dot(c);
        var perpendicular = gamma - along * c;
        double across = perpendicular.Length;
        // Unit vector across the cap toward Gamma (any perpendicular when Gamma is along c).
        var p = across > 1e-300 ? 1 / across * perpendicular : AnyPerpendicular(c);
        double angleToGamma = Math.Atan2(across, along);           // angle between c and +Gamma
        double angleToMinusGamma = Math.Atan2(across, -along);     // angle between c and -Gamma
        double magnitude = gamma.Length;

        // Extremes of Gamma . u over the cap, with the postures that reach them.
        (double Max, Vector3D At) top = angleToGamma <= theta
            ? (magnitude, magnitude > 0 ? 1 / magnitude * gamma : c)
            : (Math.Cos(theta) * along + Math.Sin(theta) * across, Math.Cos(theta) * c + Math.Sin(theta) * p);
        (double Min, Vector3D At) bottom = angleToMinusGamma <= theta
            ? (-magnitude, magnitude > 0 ? -1 / magnitude * gamma : c)
            : (Math.Cos(theta) * along - Math.Sin(theta) * across, Math.Cos(theta) * c - Math.Sin(theta) * p);
        double up = top.Max - along;
        double down = along - bottom.Min;
        var worst = up >= down ? top.At : bottom.At;
        double halfWidth = Math.Max(up, down);
        return new ShiftResult(null, Uncertainty(worst - c, gammaCovariance), halfWidth, Posture.FromVector(worst));
    }

    /// <summary>
    /// The mean and standard uncertainty of dy = Gamma . (u - c) over the cap of <paramref name="tiltDegrees"/> (180: any
    /// orientation), with u uniform by area: t = cos(angle) uniform on [cos theta, 1], so E[t] = (1 + cos theta) / 2,
    /// E[t^2] = (1 + cos theta + cos^2 theta) / 3, and with a = Gamma . c, b = |Gamma - a c|:
    /// E[dy] = a (E[t] - 1), Var[dy] = a^2 Var[t] + b^2 (1 - E[t^2]) / 2. The uncertainty of Gamma adds
    /// E[(u - c)^T Sigma (u - c)] = E[(t - 1)^2] c^T Sigma c + (1 - E[t^2]) / 2 (tr Sigma - c^T Sigma c) (derived by hand;
    /// checked against direct sampling in the tests).
    /// </summary>
    public static CapShift OverCap(Vector3D gamma, Posture calibration, double tiltDegrees, double[,]? gammaCovariance = null)
    {
        var range = WithinTilt(gamma, calibration, tiltDegrees);
        var c = calibration.Up;
        double a = gamma.Dot(c);
        double b = (gamma - a * c).Length;
        double cosTheta = Math.Cos(tiltDegrees * Math.PI / 180);
        double meanT = (1 + cosTheta) / 2;
        double meanT2 = (1 + cosTheta + cosTheta * cosTheta) / 3;
        double varT = (1 - cosTheta) * (1 - cosTheta) / 12;
        double geometric = Math.Sqrt(Math.Max(a * a * varT + b * b * (1 - meanT2) / 2, 0));
        double gammaVariance = 0;
        if (gammaCovariance is not null)
        {
            double[] cv = [c.X, c.Y, c.Z];
            double along = 0, trace = 0;
            for (int i = 0; i < 3; i++)
            {
                trace += gammaCovariance[i, i];
                for (int j = 0; j < 3; j++)
                {
                    along += cv[i] * gammaCovariance[i, j] * cv[j];
                }
            }

            double meanSquareAlong = meanT2 - 2 * meanT + 1; // E[(t - 1)^2]
            gammaVariance = Math.Max(meanSquareAlong * along + (1 - meanT2) / 2 * (trace - along), 0);
        }

        double gammaU = Math.Sqrt(gammaVariance);
        return new CapShift(a * (meanT - 1), geometric, gammaU, Math.Sqrt(geometric * geometric + gammaVariance), range.HalfWidth!.Value);
    }

    /// <summary>Any orientation at all: the tilt limit of 180 degrees.</summary>
    public static ShiftResult AnyOrientation(Vector3D gamma, Posture calibration, double[,]? gammaCovariance = null) =>
        WithinTilt(gamma, calibration, 180, gammaCovariance);

    /// <summary>
    /// <paramref name="count"/> postures drawn uniformly (by area) from the spherical cap of <paramref name="tiltDegrees"/>
    /// around the calibration posture: cos(angle) uniform on [cos theta, 1], azimuth uniform. Reproducible for a seed.
    /// </summary>
    public static Posture[] SampleWithinTilt(Posture calibration, double tiltDegrees, int count, ulong seed)
    {
        if (!double.IsFinite(tiltDegrees) || tiltDegrees < 0 || tiltDegrees > 180)
        {
            throw new MetrologyException("tiltLimitDegrees", "A tilt limit lies between 0 and 180 degrees.");
        }

        ArgumentOutOfRangeException.ThrowIfNegative(count);
        var c = calibration.Up;
        var e1 = AnyPerpendicular(c);
        var e2 = c.Cross(e1);
        double cosTheta = Math.Cos(tiltDegrees * Math.PI / 180);
        var rng = Xoshiro256.ForChunk(seed, 0, 0);
        var result = new Posture[count];
        for (int i = 0; i < count; i++)
        {
            double cosA = 1 - rng.NextDouble() * (1 - cosTheta);
            double sinA = Math.Sqrt(Math.Max(0, 1 - cosA * cosA));
            double phi = 2 * Math.PI * rng.NextDouble();
            result[i] = Posture.FromVector(cosA * c + (sinA * Math.Cos(phi)) * e1 + (sinA * Math.Sin(phi)) * e2);
        }

        return result;
    }

    private static Vector3D AnyPerpendicular(Vector3D c)
    {
        var helper = Math.Abs(c.X) < 0.9 ? new Vector3D(1, 0, 0) : new Vector3D(0, 1, 0);
        var p = helper - c.Dot(helper) * c;
        return 1 / p.Length * p;
    }

    private static double Uncertainty(Vector3D d, double[,]? covariance)
    {
        if (covariance is null)
        {
            return 0;
        }

        if (covariance.GetLength(0) != 3 || covariance.GetLength(1) != 3)
        {
            throw new MetrologyException("gammaCovariance", "The covariance of Gamma is a 3 x 3 matrix.");
        }

        var v = d.ToArray();
        double sum = 0;
        for (int i = 0; i < 3; i++)
        {
            for (int j = 0; j < 3; j++)
            {
                if (!double.IsFinite(covariance[i, j]))
                {
                    throw new MetrologyException("gammaCovariance", "The covariance must hold finite numbers.");
                }

                sum += v[i] * covariance[i, j] * v[j];
            }
        }

        if (sum < -1e-30)
        {
            throw new MetrologyException("gammaCovariance", "The covariance of Gamma is not positive semidefinite.") { NotComputable = true };
        }

        return Math.Sqrt(Math.Max(sum, 0));
    }

    private static void CheckGamma(Vector3D gamma)
    {
        if (!double.IsFinite(gamma.X) || !double.IsFinite(gamma.Y) || !double.IsFinite(gamma.Z))
        {
            throw new MetrologyException("gamma", "Gamma needs three finite components (per g).");
        }
    }
}
