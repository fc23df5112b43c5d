using MathNet.Numerics.LinearAlgebra;

namespace CalBudget.Core.Orientation;

/// <summary>One reading of a tip-over test: the posture and the fractional frequency offset measured in it.</summary>
/// <param name="Posture">The posture.</param>
/// <param name="FractionalOffset">y in that posture (dimensionless).</param>
/// <param name="StandardUncertainty">u(y) &gt; 0, or null when not stated.</param>
public sealed record PostureReading(Posture Posture, double FractionalOffset, double? StandardUncertainty = null);

/// <summary>The fitted acceleration sensitivity.</summary>
/// <param name="Gamma">Gamma per g, in the body frame.</param>
/// <param name="OffsetAtRest">y0, the offset the model assigns to zero acceleration.</param>
/// <param name="Covariance">Covariance of gamma (3 x 3), or null when it has no degrees of freedom to come from.</param>
/// <param name="DegreesOfFreedom">n - 4.</param>
/// <param name="Weighted">True when every reading carried an uncertainty and the fit used 1/u^2 weights with the covariance taken as known.</param>
/// <param name="ReducedChiSquared">chi^2 / nu of the weighted fit (the Birge ratio squared), or null when unweighted or nu = 0.</param>
/// <param name="ScaledCovariance">
/// The covariance a budget may rely on: from the residuals (unweighted), or the stated weights' covariance times
/// max(1, chi^2/nu) (weighted); null when n = 4 leaves no residual to judge the scatter by. Within-run Type A alone
/// understates the covariance, since run-to-run changes (retrace, re-seating) dominate a tip-over test.
/// </param>
public sealed record SensitivityFit(Vector3D Gamma, double OffsetAtRest, double[,]? Covariance, int DegreesOfFreedom, bool Weighted,
    double? ReducedChiSquared = null, double[,]? ScaledCovariance = null)
{
    /// <summary>|Gamma| = sqrt(Gx^2 + Gy^2 + Gz^2) (J. R. Vig's oscillator tutorial).</summary>
    public double Magnitude => Gamma.Length;

    /// <summary>Standard uncertainties of the three components, or null with the covariance.</summary>
    public double[]? StandardUncertainty => Covariance is null ? null : [Math.Sqrt(Covariance[0, 0]), Math.Sqrt(Covariance[1, 1]), Math.Sqrt(Covariance[2, 2])];
}

/// <summary>
/// The acceleration-sensitivity vector of a quartz oscillator from readings in several postures: dy = Gamma . A with
/// A = +1 g along "up", so y_k = y0 + Gamma . up_k, fitted by (weighted) least squares.
/// </summary>
public static class AccelerationSensitivity
{
    /// <summary>
    /// Fits y_k = y0 + Gamma . up_k. Weights are 1/u^2 when every reading has an uncertainty (covariance (X^T W X)^-1, taken
    /// as known); otherwise equal, with covariance s^2 (X^T X)^-1 and s^2 the residual variance on n - 4 degrees of freedom
    /// (null when n = 4). <see cref="SensitivityFit.ScaledCovariance"/> is the one to propagate: the weighted covariance
    /// scaled by the Birge ratio squared chi^2/nu when that exceeds 1 (R. T. Birge, 1932; common practice). Fewer than four readings, or postures whose up vectors lie in one plane (so that some component of
    /// Gamma is not determined), are refused as not computable.
    /// </summary>
    public static SensitivityFit Fit(IReadOnlyList<PostureReading> readings)
    {
        ArgumentNullException.ThrowIfNull(readings);
        if (readings.Count < 4)
        {
            throw new MetrologyException("observations", $"At least four postures are needed to fit Gamma and the offset at rest ({readings.Count} given).") { NotComputable = true };
        }

        foreach (var r in readings)
        {
            if (!double.IsFinite(r.FractionalOffset))
            {
                throw new MetrologyException("fractionalOffset", "Offsets must be finite numbers.");
            }

            if (r.StandardUncertainty is double u && (!double.IsFinite(u) || u <= 0))
            {
                throw new MetrologyException("standardUncertainty", "A standard uncertainty must be a finite number > 0.");
            }
        }

        int n = readings.Count;
        bool weighted = readings.All(r => r.StandardUncertainty is not null);
        var x = Matrix<double>.Build.Dense(n, 4);
        var y = Vector<double>.Build.Dense(n);
        for (int k = 0; k < n; k++)
        {
            double w = weighted ? 1 / readings[k].StandardUncertainty!.Value : 1;
            var up = readings[k].Posture.Up;
            x[k, 0] = w;
            x[k, 1] = w * up.X;
            x[k, 2] = w * up.Y;
            x[k, 3] = w * up.Z;
            y[k] = w * readings[k].FractionalOffset;
        }

        var svd = x.Svd(computeVectors: true);
        var s = svd.S;
        if (s[^1] <= 1e-9 * s[0])
        {
            throw new MetrologyException("observations",
                "The postures do not determine all three components of Gamma: their up vectors lie in one plane. Add a posture out of that plane.") { NotComputable = true };
        }

        var beta = svd.Solve(y);
        var inverse = (x.TransposeThisAndMultiply(x)).Inverse();
        int dof = n - 4;
        var residual = y - x * beta;
        double chi2 = residual.DotProduct(residual); // weighted: chi^2; unweighted: the residual sum of squares
        double? reduced = weighted && dof > 0 ? chi2 / dof : null;
        double[,]? Scaled(double scale)
        {
            var c = new double[3, 3];
            for (int i = 0; i < 3; i++)
            {
                for (int j = 0; j < 3; j++)
                {
                    c[i, j] = scale * inverse[i + 1, j + 1];
                }
            }

            return c;
        }

        // the contract's covariance: (X^T W X)^-1 with the weights taken as known, else s^2 (X^T X)^-1 on n - 4 degrees of freedom
        double[,]? covariance = weighted ? Scaled(1) : dof > 0 ? Scaled(chi2 / dof) : null;
        double[,]? honest = !weighted ? covariance : reduced is double ratio ? Scaled(Math.Max(1, ratio)) : null;
        return new SensitivityFit(new Vector3D(beta[1], beta[2], beta[3]), beta[0], covariance, dof, weighted, reduced, honest);
    }

    /// <summary>The classic six-position tip-over: Gamma_i = (y(+i up) - y(-i up)) / 2 (follows from dy = Gamma . A).</summary>
    public static Vector3D SixPosition(double plusX, double minusX, double plusY, double minusY, double plusZ, double minusZ) =>
        new((plusX - minusX) / 2, (plusY - minusY) / 2, (plusZ - minusZ) / 2);
}
