using MathNet.Numerics.LinearAlgebra;
using MathNet.Numerics.Optimization;

namespace CalBudget.Core.Aging;

/// <summary>The aging models.</summary>
public enum AgingModel
{
    /// <summary>y(t) = y0 + r t, t in days: the usual model for a mature oscillator.</summary>
    Linear,
    /// <summary>y(t) = A ln(B t + 1) + y0, t in days from the start (MIL-PRF-55310 aging-test model).</summary>
    Logarithmic,
}

/// <summary>One dated reading of an aging history.</summary>
/// <param name="Days">Time in days from the first reading (or any fixed origin).</param>
/// <param name="FractionalOffset">y at that time.</param>
/// <param name="StandardUncertainty">u(y) &gt; 0, or null; weights are 1/u^2 only when every point has one.</param>
public sealed record AgingPoint(double Days, double FractionalOffset, double? StandardUncertainty = null);

/// <summary>A fitted aging model.</summary>
/// <param name="Model">Which model.</param>
/// <param name="Parameters">Linear: [y0, r per day]. Logarithmic: [A, B per day, y0].</param>
/// <param name="Covariance">The parameters' covariance (weighted: taken as known; else scaled by the residual variance).</param>
/// <param name="ResidualStandardDeviation">sqrt(RSS / (n - p)), unweighted residuals.</param>
/// <param name="DegreesOfFreedom">n - p.</param>
public sealed record AgingResult(AgingModel Model, double[] Parameters, double[,] Covariance, double ResidualStandardDeviation, int DegreesOfFreedom)
{
    /// <summary>The model's value at <paramref name="days"/>.</summary>
    public double ValueAt(double days) => Model == AgingModel.Linear
        ? Parameters[0] + Parameters[1] * days
        : Parameters[0] * Math.Log(Parameters[1] * days + 1) + Parameters[2];

    /// <summary>
    /// The prediction at <paramref name="days"/>: the fitted value, its standard uncertainty g^T C g from the parameter
    /// covariance, and that of a new reading there (adding the residual variance).
    /// </summary>
    public (double Value, double StandardUncertainty, double NewReadingUncertainty) Predict(double days)
    {
        if (!double.IsFinite(days))
        {
            throw new MetrologyException("predictAt", "The prediction time must be finite.");
        }

        if (Model == AgingModel.Logarithmic && Parameters[1] * days + 1 <= 0)
        {
            throw new MetrologyException("predictAt", "The logarithmic model is not defined that far before its origin.") { NotComputable = true };
        }

        double[] g = Model == AgingModel.Linear
            ? [1, days]
            : [Math.Log(Parameters[1] * days + 1), Parameters[0] * days / (Parameters[1] * days + 1), 1];
        double variance = 0;
        for (int i = 0; i < g.Length; i++)
        {
            for (int j = 0; j < g.Length; j++)
            {
                variance += g[i] * Covariance[i, j] * g[j];
            }
        }

        double u = Math.Sqrt(Math.Max(variance, 0));
        return (ValueAt(days), u, Math.Sqrt(u * u + ResidualStandardDeviation * ResidualStandardDeviation));
    }
}

/// <summary>Least-squares fits of aging models to dated fractional-frequency history.</summary>
public static class AgingFit
{
    /// <summary>Fits <paramref name="model"/> to <paramref name="points"/>.</summary>
    public static AgingResult Fit(IReadOnlyList<AgingPoint> points, AgingModel model)
    {
        ArgumentNullException.ThrowIfNull(points);
        int p = model == AgingModel.Linear ? 2 : 3;
        if (points.Count <= p)
        {
            throw new MetrologyException("points", $"The {model.ToString().ToLowerInvariant()} model needs at least {p + 1} points ({points.Count} given).") { NotComputable = true };
        }

        foreach (var point in points)
        {
            if (!double.IsFinite(point.Days) || !double.IsFinite(point.FractionalOffset))
            {
                throw new MetrologyException("points", "Times and offsets must be finite.");
            }

            if (point.StandardUncertainty is double u && (!double.IsFinite(u) || u <= 0))
            {
                throw new MetrologyException("points", "A standard uncertainty must be a finite number > 0.");
            }
        }

        if (points.Select(q => q.Days).Distinct().Count() < 2)
        {
            throw new MetrologyException("points", "The points need at least two different times.") { NotComputable = true };
        }

        return model == AgingModel.Linear ? Linear(points) : Logarithmic(points);
    }

    private static bool Weighted(IReadOnlyList<AgingPoint> points) => points.All(q => q.StandardUncertainty is not null);

    // QR on a centred time axis (the NIST StRD Norris check needs the digits), then back to the original origin.
    private static AgingResult Linear(IReadOnlyList<AgingPoint> points)
    {
        int n = points.Count;
        bool weighted = Weighted(points);
        double centre = points.Average(q => q.Days);
        var x = Matrix<double>.Build.Dense(n, 2);
        var y = Vector<double>.Build.Dense(n);
        for (int k = 0; k < n; k++)
        {
            double w = weighted ? 1 / points[k].StandardUncertainty!.Value : 1;
            x[k, 0] = w;
            x[k, 1] = w * (points[k].Days - centre);
            y[k] = w * points[k].FractionalOffset;
        }

        var beta = x.QR().Solve(y);
        var inverse = x.TransposeThisAndMultiply(x).Inverse();
        double rss = 0;
        for (int k = 0; k < n; k++)
        {
            double r = points[k].FractionalOffset - (beta[0] + beta[1] * (points[k].Days - centre));
            rss += r * r;
        }

        int dof = n - 2;
        double weightedRss = (y - x * beta).DotProduct(y - x * beta);
        double scale = weighted ? 1 : weightedRss / dof;
        // back to the original origin: y0 = b0 - b1 c
        double c00 = scale * inverse[0, 0], c01 = scale * inverse[0, 1], c11 = scale * inverse[1, 1];
        var covariance = new double[,]
        {
            { c00 - 2 * centre * c01 + centre * centre * c11, c01 - centre * c11 },
            { c01 - centre * c11, c11 },
        };
        return new AgingResult(AgingModel.Linear, [beta[0] - beta[1] * centre, beta[1]], covariance, Math.Sqrt(rss / dof), dof);
    }

    // Levenberg-Marquardt (MathNet) from the best B of a profile grid: for fixed B the model is linear in A and y0.
    private static AgingResult Logarithmic(IReadOnlyList<AgingPoint> points)
    {
        int n = points.Count;
        bool weighted = Weighted(points);
        if (points.Any(q => q.Days < 0))
        {
            throw new MetrologyException("points", "The logarithmic model counts days from the start of the test: no point may lie before it.");
        }

        double span = points.Max(q => q.Days);
        var t = Vector<double>.Build.Dense(points.Select(q => q.Days).ToArray());
        var y = Vector<double>.Build.Dense(points.Select(q => q.FractionalOffset).ToArray());
        var w = Vector<double>.Build.Dense(points.Select(q => weighted ? 1 / (q.StandardUncertainty!.Value * q.StandardUncertainty.Value) : 1.0).ToArray());

        double bestB = double.NaN, bestRss = double.PositiveInfinity;
        for (int k = 0; k <= 120; k++)
        {
            double b = Math.Pow(10, -4 + 8.0 * k / 120) / span;
            var (_, _, rss) = ProfileFit(t, y, w, b);
            if (rss < bestRss)
            {
                bestRss = rss;
                bestB = b;
            }
        }

        var (a0, c0, _) = ProfileFit(t, y, w, bestB);
        // The optimiser's tolerances are absolute, so it works on offsets scaled to order one: y / s with s the offsets'
        // spread, weights w s^2, and parameters p = [A / s, ln(B span), y0 / s].
        double s = Math.Max(y.Maximum() - y.Minimum(), Math.Abs(y.Average()));
        s = s > 0 ? s : 1;
        var scaledY = y / s;
        var scaledW = w * (s * s);
        Vector<double> Model(Vector<double> p, Vector<double> days) =>
            Vector<double>.Build.Dense(days.Count, i => p[0] * Math.Log(Math.Exp(p[1]) / span * days[i] + 1) + p[2]);
        Matrix<double> Jacobian(Vector<double> p, Vector<double> days) => Matrix<double>.Build.Dense(days.Count, 3, (i, j) =>
        {
            double b = Math.Exp(p[1]) / span;
            return j switch
            {
                0 => Math.Log(b * days[i] + 1),
                1 => p[0] * b * days[i] / (b * days[i] + 1),
                _ => 1.0,
            };
        });

        var objective = ObjectiveFunction.NonlinearModel(Model, Jacobian, t, scaledY, weighted ? scaledW : null);
        var start = Vector<double>.Build.Dense([a0 / s, Math.Log(bestB * span), c0 / s]);
        NonlinearMinimizationResult result;
        try
        {
            result = new LevenbergMarquardtMinimizer(initialMu: 1e-3, gradientTolerance: 1e-15, stepTolerance: 1e-15,
                functionTolerance: 1e-15, maximumIterations: 1000).FindMinimum(objective, start);
        }
        catch (Exception ex) when (ex is MaximumIterationsException or ArithmeticException or ArgumentException)
        {
            throw NotConverged(ex.Message);
        }

        if (result.ReasonForExit is ExitCondition.ExceedIterations or ExitCondition.InvalidValues or ExitCondition.LackOfProgress or ExitCondition.None)
        {
            throw NotConverged($"the optimiser stopped with {result.ReasonForExit}");
        }

        var q = result.MinimizingPoint;
        double aFit = s * q[0], bFit = Math.Exp(q[1]) / span, yFit = s * q[2];
        if (bFit * span < 1e-2)
        {
            // ln(B t + 1) bends by under 1 % over the span: A and B only trade off against each other.
            throw NotConverged("the history is indistinguishable from linear aging over this span (B times the span is below 0.01)");
        }

        // Covariance from the Jacobian at the minimum in the natural parameters [A, B, y0].
        var j = Matrix<double>.Build.Dense(n, 3, (i, col) => col switch
        {
            0 => Math.Log(bFit * t[i] + 1),
            1 => aFit * t[i] / (bFit * t[i] + 1),
            _ => 1,
        });
        var jw = Matrix<double>.Build.Dense(n, 3, (i, col) => j[i, col] * Math.Sqrt(w[i]));
        var normal = jw.TransposeThisAndMultiply(jw);
        // Identifiability on unit-length columns, so that the parameters' very different scales do not count: A and B
        // trade off (collinear columns) when the history is straight over the span.
        var unit = Matrix<double>.Build.Dense(n, 3, (i, col) => jw[i, col] / jw.Column(col).L2Norm());
        var singular = unit.Svd(computeVectors: false).S;
        if (!(singular[^1] > 1e-6 * singular[0]))
        {
            throw NotConverged("A and B are not separately determined: the history is indistinguishable from linear aging over this span");
        }

        double rssUnweighted = 0, rssWeighted = 0;
        for (int i = 0; i < n; i++)
        {
            double r = y[i] - (aFit * Math.Log(bFit * t[i] + 1) + yFit);
            rssUnweighted += r * r;
            rssWeighted += w[i] * r * r;
        }

        int dof = n - 3;
        var inverse = normal.Inverse();
        double scale = weighted ? 1 : rssWeighted / dof;
        var covariance = new double[3, 3];
        for (int r = 0; r < 3; r++)
        {
            for (int c = 0; c < 3; c++)
            {
                covariance[r, c] = scale * inverse[r, c];
            }
        }

        if (!double.IsFinite(aFit) || !double.IsFinite(bFit) || covariance.Cast<double>().Any(v => !double.IsFinite(v)))
        {
            throw NotConverged("the fit produced non-finite values");
        }

        return new AgingResult(AgingModel.Logarithmic, [aFit, bFit, yFit], covariance, Math.Sqrt(rssUnweighted / dof), dof);
    }

    // For fixed B: weighted least squares of y = A ln(B t + 1) + y0.
    private static (double A, double Y0, double Rss) ProfileFit(Vector<double> t, Vector<double> y, Vector<double> w, double b)
    {
        double sw = 0, sx = 0, sy = 0, sxx = 0, sxy = 0;
        for (int i = 0; i < t.Count; i++)
        {
            double x = Math.Log(b * t[i] + 1);
            sw += w[i];
            sx += w[i] * x;
            sy += w[i] * y[i];
            sxx += w[i] * x * x;
            sxy += w[i] * x * y[i];
        }

        double det = sw * sxx - sx * sx;
        if (!(Math.Abs(det) > 0))
        {
            return (0, sy / sw, double.PositiveInfinity);
        }

        double a = (sw * sxy - sx * sy) / det;
        double y0 = (sy - a * sx) / sw;
        double rss = 0;
        for (int i = 0; i < t.Count; i++)
        {
            double r = y[i] - (a * Math.Log(b * t[i] + 1) + y0);
            rss += w[i] * r * r;
        }

        return (a, y0, rss);
    }

    private static MetrologyException NotConverged(string why) =>
        new("points", $"The logarithmic aging fit did not converge: {why}. Fit the linear model instead, or add history.") { NotComputable = true };
}
