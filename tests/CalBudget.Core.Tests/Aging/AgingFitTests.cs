using System.Globalization;
using CalBudget.Core.Aging;

namespace CalBudget.Core.Tests.Aging;

public class AgingFitTests
{
    // NIST/ITL Statistical Reference Datasets, linear least squares, "Norris" (public reference data with certified values;
    // the file, with its header naming the source, is Aging/Data/nist-strd-norris.txt).
    private static AgingPoint[] Norris() => File.ReadLines(Path.Combine(AppContext.BaseDirectory, "Aging", "Data", "nist-strd-norris.txt"))
        .Where(l => l.Length > 0 && l[0] != '#')
        .Select(l => l.Split(' ', StringSplitOptions.RemoveEmptyEntries))
        .Select(f => new AgingPoint(double.Parse(f[1], CultureInfo.InvariantCulture), double.Parse(f[0], CultureInfo.InvariantCulture)))
        .ToArray();

    [Fact]
    public void LinearFitReproducesTheNistNorrisCertifiedValues()
    {
        var points = Norris();
        Assert.Equal(36, points.Length);
        var fit = AgingFit.Fit(points, AgingModel.Linear);
        // Certified: B0 = -0.262323073774029 (sd 0.232818234301152), B1 = 1.00211681802045 (sd 0.429796848199937E-03),
        // residual sd 0.884796396144373 on 34 degrees of freedom.
        Check.Relative(-0.262323073774029, fit.Parameters[0], 1e-9, "B0");
        Check.Relative(1.00211681802045, fit.Parameters[1], 1e-10, "B1");
        Check.Relative(0.232818234301152, Math.Sqrt(fit.Covariance[0, 0]), 1e-8, "sd(B0)");
        Check.Relative(0.429796848199937E-03, Math.Sqrt(fit.Covariance[1, 1]), 1e-8, "sd(B1)");
        Check.Relative(0.884796396144373, fit.ResidualStandardDeviation, 1e-9, "residual sd");
        Assert.Equal(34, fit.DegreesOfFreedom);
    }

    [Fact]
    public void LinearPredictionCarriesTheParameterCovariance()
    {
        var fit = AgingFit.Fit(Norris(), AgingModel.Linear);
        var (value, u, uNew) = fit.Predict(500);
        double expectedU = Math.Sqrt(fit.Covariance[0, 0] + 2 * 500 * fit.Covariance[0, 1] + 500 * 500 * fit.Covariance[1, 1]);
        Check.Relative(fit.Parameters[0] + fit.Parameters[1] * 500, value, 1e-14);
        Check.Relative(expectedU, u, 1e-12);
        Check.Relative(Math.Sqrt(expectedU * expectedU + fit.ResidualStandardDeviation * fit.ResidualStandardDeviation), uNew, 1e-12);
    }

    [Fact]
    public void WeightedLinearFitTakesTheStatedUncertaintiesAsKnown()
    {
        // Two exact points of equal weight: slope and offset exact, Var(r) = 2 u^2 / (t2 - t1)^2 (by hand).
        double u = 1e-12;
        var fit = AgingFit.Fit([new AgingPoint(0, 1e-9, u), new AgingPoint(10, 1.1e-9, u), new AgingPoint(20, 1.2e-9, u)], AgingModel.Linear);
        Check.Relative(1e-11, fit.Parameters[1], 1e-9);
        // three equally spaced points: Var(r) = u^2 / sum (t - mean)^2 = u^2 / 200
        Check.Relative(u * u / 200, fit.Covariance[1, 1], 1e-9);
    }

    [Fact]
    public void LogarithmicFitRecoversKnownParameters()
    {
        // Synthetic MIL-PRF-55310-style history: A = 2e-9, B = 0.05 per day, y0 = 1e-8, readings every 2 days for 200 days
        // with seeded noise of 1e-12.
        var random = new Random(8);
        var points = Enumerable.Range(0, 101).Select(k =>
        {
            double t = 2.0 * k;
            double noise = 1e-12 * (random.NextDouble() + random.NextDouble() + random.NextDouble() - 1.5) * 2;
            return new AgingPoint(t, 2e-9 * Math.Log(0.05 * t + 1) + 1e-8 + noise);
        }).ToArray();
        var fit = AgingFit.Fit(points, AgingModel.Logarithmic);
        Check.Relative(2e-9, fit.Parameters[0], 0.01, "A");
        Check.Relative(0.05, fit.Parameters[1], 0.02, "B");
        Check.Relative(1e-8, fit.Parameters[2], 0.001, "y0");
        var (value, u, _) = fit.Predict(365);
        Check.Relative(2e-9 * Math.Log(0.05 * 365 + 1) + 1e-8, value, 0.002, "prediction");
        Assert.True(u > 0 && u < 1e-11);
        // the true parameters lie within a few standard uncertainties
        Assert.InRange(Math.Abs(fit.Parameters[1] - 0.05), 0, 4 * Math.Sqrt(fit.Covariance[1, 1]));
    }

    [Fact]
    public void AStraightHistoryIsNotForcedIntoTheLogarithmicModel()
    {
        var points = Enumerable.Range(0, 30).Select(k => new AgingPoint(k, 1e-10 + 1e-12 * k)).ToArray();
        var ex = Assert.Throws<MetrologyException>(() => AgingFit.Fit(points, AgingModel.Logarithmic));
        Assert.True(ex.NotComputable);
    }

    [Fact]
    public void TooFewPointsAreNotComputable()
    {
        Assert.True(Assert.Throws<MetrologyException>(() => AgingFit.Fit([new AgingPoint(0, 1), new AgingPoint(1, 2)], AgingModel.Linear)).NotComputable);
        Assert.True(Assert.Throws<MetrologyException>(() => AgingFit.Fit([new AgingPoint(0, 1), new AgingPoint(1, 2), new AgingPoint(2, 3)], AgingModel.Logarithmic)).NotComputable);
        Assert.True(Assert.Throws<MetrologyException>(() => AgingFit.Fit([new AgingPoint(3, 1), new AgingPoint(3, 2), new AgingPoint(3, 3)], AgingModel.Linear)).NotComputable);
    }
}
