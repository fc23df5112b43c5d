using CalBudget.Core.Orientation;

namespace CalBudget.Core.Tests.Orientation;

/// <summary>
/// The tip-over fit's covariance when run-to-run scatter (re-seating, retrace) dominates the within-run Type A, checked
/// against a brute-force Monte Carlo of the fit; and the cap distribution with u(Gamma) against direct sampling.
/// </summary>
public class HonestCovarianceTests
{
    private static readonly Vector3D Gamma = new(1e-10, -2e-10, 4e-10);
    private static readonly string[] Twelve = ["+x", "-x", "+y", "-y", "+z", "-z", "+x", "-x", "+y", "-y", "+z", "-z"];

    private static double Normal(Random r) => Math.Sqrt(-2 * Math.Log(1 - r.NextDouble())) * Math.Cos(2 * Math.PI * r.NextDouble());

    [Fact]
    public void TheScaledCovarianceMatchesTheScatterOfRepeatedFitsWhereTheStatedWeightsUnderstateIt()
    {
        // each run states a within-run u of 2e-13 (its Type A) but moves by 3e-12 from run to run (re-seating, retrace:
        // invented figures of the common-practice size); 2,000 repeated tests of twelve runs each
        const double within = 2e-13, runToRun = 3e-12;
        var random = new Random(1139);
        var estimates = new List<double[]>();
        double scaledSum = 0, statedSum = 0;
        const int tests = 2000;
        for (int t = 0; t < tests; t++)
        {
            var readings = Twelve.Select(a =>
            {
                var p = Posture.FromAxis(a);
                return new PostureReading(p, 3e-11 + Gamma.Dot(p.Up) + runToRun * Normal(random) + within * Normal(random), within);
            }).ToArray();
            var fit = AccelerationSensitivity.Fit(readings);
            Assert.Equal(8, fit.DegreesOfFreedom);
            estimates.Add([fit.Gamma.X, fit.Gamma.Y, fit.Gamma.Z]);
            scaledSum += fit.ScaledCovariance![2, 2];
            statedSum += fit.Covariance![2, 2];
        }

        double mean = estimates.Average(e => e[2]);
        double empirical = estimates.Sum(e => (e[2] - mean) * (e[2] - mean)) / (tests - 1);
        // by hand: twelve runs, each axis twice up and twice down, so Var(Gamma_z) = (runToRun^2 + within^2) / 4
        Check.Relative((runToRun * runToRun + within * within) / 4, empirical, 0.08, "brute-force variance");
        // the Birge-scaled covariance is right on average (the residual variance is unbiased; max(1, .) adds a little)
        Check.Relative(empirical, scaledSum / tests, 0.08, "scaled covariance");
        // the stated weights alone understate it by (runToRun / within)^2, here 225 times
        Assert.True(statedSum / tests < empirical / 100, $"stated {statedSum / tests:G3} against {empirical:G3}");
    }

    [Fact]
    public void FourPosturesLeaveNoCovarianceToRelyOn()
    {
        var readings = new[] { "+x", "+y", "+z", "-z" }.Select(a => new PostureReading(Posture.FromAxis(a), Gamma.Dot(Posture.FromAxis(a).Up), 1e-12)).ToArray();
        var fit = AccelerationSensitivity.Fit(readings);
        Assert.Equal(0, fit.DegreesOfFreedom);
        Assert.NotNull(fit.Covariance);        // the contract's covariance with the weights taken as known
        Assert.Null(fit.ScaledCovariance);     // but nothing to judge the run-to-run scatter by
        Assert.Null(fit.ReducedChiSquared);
    }

    [Fact]
    public void TheBirgeRatioIsNotAppliedBelowOne()
    {
        var random = new Random(5);
        var readings = Twelve.Select(a => new PostureReading(Posture.FromAxis(a), Gamma.Dot(Posture.FromAxis(a).Up) + 1e-13 * Normal(random), 1e-12)).ToArray();
        var fit = AccelerationSensitivity.Fit(readings);
        Assert.True(fit.ReducedChiSquared < 1);
        Assert.Equal(fit.Covariance![1, 1], fit.ScaledCovariance![1, 1]);
    }

    [Theory]
    [InlineData(20.0)]
    [InlineData(60.0)]
    [InlineData(180.0)]
    public void TheCapShiftWithGammaUncertaintyMatchesDirectSampling(double tilt)
    {
        // postures uniform over the cap (the sampler), Gamma drawn from its covariance: the mean and standard deviation of
        // Gamma . (u - c) against OverCap's closed forms
        var calibration = Posture.FromVector(new Vector3D(0.2, 0.1, 1));
        double[,] cov = { { 4e-22, 1e-22, 0 }, { 1e-22, 9e-22, -2e-22 }, { 0, -2e-22, 2.5e-21 } };
        var chol = new MathNet.Numerics.LinearAlgebra.Double.DenseMatrix(3, 3, [4e-22, 1e-22, 0, 1e-22, 9e-22, -2e-22, 0, -2e-22, 2.5e-21]).Cholesky().Factor;
        var cap = OrientationShift.OverCap(Gamma, calibration, tilt, cov);
        const int n = 400_000;
        var postures = OrientationShift.SampleWithinTilt(calibration, tilt, n, seed: 77);
        var random = new Random(78);
        double sum = 0, sumSq = 0;
        for (int i = 0; i < n; i++)
        {
            double z0 = Normal(random), z1 = Normal(random), z2 = Normal(random);
            var g = new Vector3D(Gamma.X + chol[0, 0] * z0, Gamma.Y + chol[1, 0] * z0 + chol[1, 1] * z1, Gamma.Z + chol[2, 0] * z0 + chol[2, 1] * z1 + chol[2, 2] * z2);
            double dy = g.Dot(postures[i].Up - calibration.Up);
            sum += dy;
            sumSq += dy * dy;
        }

        double mean = sum / n;
        double sd = Math.Sqrt(sumSq / n - mean * mean);
        Check.Absolute(mean, cap.Mean, 4 * sd / Math.Sqrt(n), $"mean at {tilt}");
        Check.Relative(sd, cap.StandardUncertainty, 4 / Math.Sqrt(2.0 * n) + 2e-3, $"u at {tilt}");
        Assert.True(cap.GammaStandardUncertainty > 0);
        // without u(Gamma) the geometry alone is the existing cap distribution's (InputDistribution.OrientationWithinTilt)
        var plain = CalBudget.Core.Gum.InputDistribution.OrientationWithinTilt(Gamma, calibration, tilt);
        Check.Relative(plain.StandardUncertainty, cap.GeometricStandardDeviation, 1e-12, "geometry");
        Check.Relative(plain.MeanShift, cap.Mean, 1e-12, "mean shift");
    }
}
