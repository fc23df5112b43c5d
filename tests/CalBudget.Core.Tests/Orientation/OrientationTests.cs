using CalBudget.Core.Gum;
using CalBudget.Core.Orientation;

namespace CalBudget.Core.Tests.Orientation;

public class OrientationTests
{
    private static readonly Vector3D Gamma = new(1e-10, -2e-10, 4e-10);
    private const double Rest = 3e-11;

    private static PostureReading Reading(string axis, double? u = null, double noise = 0)
    {
        var p = Posture.FromAxis(axis);
        return new PostureReading(p, Rest + Gamma.Dot(p.Up) + noise, u);
    }

    private static readonly string[] Six = ["+x", "-x", "+y", "-y", "+z", "-z"];

    [Fact]
    public void SixPositionFormulaAndLeastSquaresAgree()
    {
        // Gamma_i = (y(+i up) - y(-i up)) / 2 (../shared/CHECKS.md, follows from dy = Gamma . A)
        var readings = Six.Select(a => Reading(a)).ToArray();
        var six = AccelerationSensitivity.SixPosition(readings[0].FractionalOffset, readings[1].FractionalOffset,
            readings[2].FractionalOffset, readings[3].FractionalOffset, readings[4].FractionalOffset, readings[5].FractionalOffset);
        var fit = AccelerationSensitivity.Fit(readings);
        foreach (var (expected, a, b) in new[] { (Gamma.X, six.X, fit.Gamma.X), (Gamma.Y, six.Y, fit.Gamma.Y), (Gamma.Z, six.Z, fit.Gamma.Z) })
        {
            Check.Relative(expected, a, 1e-12);
            Check.Relative(expected, b, 1e-9);
        }

        Check.Relative(Rest, fit.OffsetAtRest, 1e-9);
        Check.Relative(Math.Sqrt(1 + 4 + 16) * 1e-10, fit.Magnitude, 1e-9);
        Assert.Equal(2, fit.DegreesOfFreedom);
    }

    [Fact]
    public void VigsTurnedOverFigureIsFourPartsIn1e9()
    {
        // J. R. Vig's oscillator tutorial (seen): Gamma = 2e-9/g turned upside down (a 2 g change) gives 4e-9.
        var shift = OrientationShift.Known(new Vector3D(0, 0, 2e-9), Posture.FromAxis("+z"), Posture.FromAxis("-z"));
        Check.Relative(4e-9, Math.Abs(shift.Shift!.Value), 1e-15);
    }

    [Fact]
    public void OnePartIn1e9PerGIsTwentyMillihertzOnAFullFlipAt10MHz()
    {
        // Practice (../shared/DOMAIN.md): at 10 MHz, 1e-9/g is 0.01 Hz per g, so a full flip moves the output 0.02 Hz.
        var shift = OrientationShift.Known(new Vector3D(1e-9, 0, 0), Posture.FromAxis("+x"), Posture.FromAxis("-x"));
        Check.Relative(0.02, Math.Abs(shift.Shift!.Value) * 10e6, 1e-12);
    }

    [Fact]
    public void WeightedSixPositionCovarianceIsHalfTheReadingVariance()
    {
        // By hand: X^T W X = diag(6, 2, 2, 2) / u^2 for the six axes, so Var(Gamma_i) = u^2 / 2, as for (y+ - y-)/2.
        double u = 5e-12;
        var fit = AccelerationSensitivity.Fit(Six.Select(a => Reading(a, u)).ToArray());
        Assert.True(fit.Weighted);
        for (int i = 0; i < 3; i++)
        {
            Check.Relative(u * u / 2, fit.Covariance![i, i], 1e-9);
            Check.Relative(u / Math.Sqrt(2), fit.StandardUncertainty![i], 1e-9);
        }

        Assert.Equal(0, fit.Covariance![0, 1], 1e-40);
    }

    [Fact]
    public void UnweightedCovarianceComesFromTheResiduals()
    {
        // Raise both x readings by e: Gamma is unchanged and y0 rises by e/3 (its estimate is the mean of the six readings);
        // s^2 = RSS / (6 - 4), and Var(Gamma_x) = s^2 (X^T X)^-1_xx = s^2 / 2 (worked by hand below).
        double e = 1e-12;
        var readings = Six.Select(a => Reading(a, noise: a.EndsWith('x') ? e : 0)).ToArray();
        var fit = AccelerationSensitivity.Fit(readings);
        Assert.False(fit.Weighted);
        // Offsets in +-x rise by e: y0 rises by e/3; residuals: +-x: e - e/3 = 2e/3 (two), others -e/3 (four): RSS = 8e^2/9 + 4e^2/9 = 4e^2/3.
        double s2 = 4 * e * e / 3 / 2;
        Check.Relative(Rest + e / 3, fit.OffsetAtRest, 1e-6);
        Check.Relative(s2 / 2, fit.Covariance![0, 0], 1e-6);
    }

    [Fact]
    public void ArbitraryPosturesFitTheSameVector()
    {
        var postures = new[] { new Vector3D(0, 0.7071, 0.7071), new Vector3D(1, 1, 0), new Vector3D(0, 0, 1), new Vector3D(-1, 0, 0.2), new Vector3D(0.3, -1, -0.5) };
        var readings = postures.Select(v => Posture.FromVector(v)).Select(p => new PostureReading(p, Rest + Gamma.Dot(p.Up))).ToArray();
        var fit = AccelerationSensitivity.Fit(readings);
        Check.Relative(Gamma.Z, fit.Gamma.Z, 1e-9);
        Check.Relative(Gamma.Y, fit.Gamma.Y, 1e-9);
    }

    [Fact]
    public void FewerThanFourPosturesAreNotComputable()
    {
        var ex = Assert.Throws<MetrologyException>(() => AccelerationSensitivity.Fit(Six.Take(3).Select(a => Reading(a)).ToArray()));
        Assert.True(ex.NotComputable);
        Assert.Equal("observations", ex.Parameter);
    }

    [Fact]
    public void CoplanarPosturesDoNotDetermineGamma()
    {
        var ex = Assert.Throws<MetrologyException>(() => AccelerationSensitivity.Fit(new[] { "+x", "-x", "+y", "-y" }.Select(a => Reading(a)).ToArray()));
        Assert.True(ex.NotComputable);
        Assert.Contains("plane", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void ExactlyFourUnweightedPosturesGiveGammaWithoutCovariance()
    {
        var fit = AccelerationSensitivity.Fit(new[] { "+x", "+y", "+z", "-z" }.Select(a => Reading(a)).ToArray());
        Check.Relative(Gamma.Z, fit.Gamma.Z, 1e-9);
        Assert.Null(fit.Covariance);
        Assert.Equal(0, fit.DegreesOfFreedom);
    }

    [Theory]
    [InlineData("up")]
    [InlineData("+w")]
    [InlineData("")]
    public void UnknownAxisNamesAreRefused(string axis) =>
        Assert.Equal("up", Assert.Throws<MetrologyException>(() => Posture.FromAxis(axis)).Parameter);

    [Fact]
    public void ZeroLengthUpVectorsAreRefused()
    {
        Assert.Throws<MetrologyException>(() => Posture.FromVector(new Vector3D(0, 0, 0)));
        Assert.Throws<MetrologyException>(() => Posture.FromVector(new Vector3D(double.NaN, 0, 1)));
    }

    [Fact]
    public void KnownPostureUncertaintyIsTheQuadraticFormOfTheCovariance()
    {
        // d = (-z) - (+z) = (0, 0, -2): u^2 = 4 Sigma_zz
        var covariance = new double[,] { { 1e-24, 0, 0 }, { 0, 2e-24, 0 }, { 0, 0, 9e-24 } };
        var r = OrientationShift.Known(Gamma, Posture.FromAxis("+z"), Posture.FromAxis("-z"), covariance);
        Check.Relative(-8e-10, r.Shift!.Value, 1e-12);
        Check.Relative(Math.Sqrt(4 * 9e-24), r.StandardUncertainty, 1e-12);
        Assert.Null(r.HalfWidth);
    }

    [Theory]
    [InlineData(0.0)]
    [InlineData(5.0)]
    [InlineData(20.0)]
    [InlineData(60.0)]
    [InlineData(90.0)]
    [InlineData(135.0)]
    [InlineData(180.0)]
    public void TiltHalfWidthMatchesABruteForceSearchOverPostures(double tilt)
    {
        var calibration = Posture.FromVector(new Vector3D(0.2, -0.1, 1));
        var exact = OrientationShift.WithinTilt(Gamma, calibration, tilt).HalfWidth!.Value;
        // Brute force: a fine grid of angle from the calibration posture and azimuth around it.
        var c = calibration.Up;
        var e1 = Posture.FromVector(c.Cross(new Vector3D(1, 0, 0))).Up;
        var e2 = c.Cross(e1);
        double best = 0;
        for (int i = 0; i <= 400; i++)
        {
            double a = tilt * Math.PI / 180 * i / 400;
            for (int j = 0; j < 720; j++)
            {
                double phi = 2 * Math.PI * j / 720;
                var u = Math.Cos(a) * c + (Math.Sin(a) * Math.Cos(phi)) * e1 + (Math.Sin(a) * Math.Sin(phi)) * e2;
                best = Math.Max(best, Math.Abs(Gamma.Dot(u - c)));
            }
        }

        Assert.True(exact >= best * (1 - 1e-12), $"exact {exact} below brute force {best}");
        if (tilt > 0)
        {
            Check.Relative(best, exact, 2e-4, $"tilt {tilt}");
        }
        else
        {
            Assert.Equal(0, exact);
        }
    }

    [Fact]
    public void AnyOrientationIsMagnitudePlusTheComponentAlongTheCalibrationPosture()
    {
        // Worst case u = -sign(Gamma . c) Gamma/|Gamma|: |dy| = |Gamma| + |Gamma . c| (by hand)
        var r = OrientationShift.AnyOrientation(Gamma, Posture.FromAxis("+z"));
        Check.Relative(Gamma.Length + Math.Abs(Gamma.Z), r.HalfWidth!.Value, 1e-12);
        Assert.Null(r.Shift);
    }

    [Theory]
    [InlineData(-1.0)]
    [InlineData(181.0)]
    [InlineData(double.NaN)]
    public void TiltOutsideZeroTo180IsRefused(double tilt) =>
        Assert.Equal("tiltLimitDegrees", Assert.Throws<MetrologyException>(() => OrientationShift.WithinTilt(Gamma, Posture.FromAxis("+z"), tilt)).Parameter);

    [Fact]
    public void SampledPosturesAreUniformOverTheCap()
    {
        var calibration = Posture.FromAxis("+y");
        const double tilt = 20;
        var samples = OrientationShift.SampleWithinTilt(calibration, tilt, 200_000, seed: 4);
        Assert.All(samples, p => Assert.True(p.AngleDegrees(calibration) <= tilt + 1e-9));
        // Uniform by area: cos(angle) is uniform on [cos 20 deg, 1]; Kolmogorov-Smirnov at 0.1 %: 1.95 / sqrt(N).
        double lo = Math.Cos(tilt * Math.PI / 180);
        var cosines = samples.Select(p => p.Up.Dot(calibration.Up)).Order().ToArray();
        double d = cosines.Select((v, i) => Math.Abs((v - lo) / (1 - lo) - (i + 0.5) / cosines.Length)).Max();
        Assert.True(d < 1.95 / Math.Sqrt(cosines.Length), $"KS {d}");
        // and the azimuth has no preferred side: the mean up vector lies along the calibration posture
        double meanX = samples.Average(p => p.Up.X), meanZ = samples.Average(p => p.Up.Z);
        Assert.InRange(meanX, -0.003, 0.003);
        Assert.InRange(meanZ, -0.003, 0.003);
    }
}

public class OrientationContributionTests
{
    private static readonly Vector3D Gamma = new(1e-9, 0, 3e-10);
    private static readonly Posture Calibration = Posture.FromAxis("+z");

    [Theory]
    [InlineData(10.0)]
    [InlineData(30.0)]
    [InlineData(90.0)]
    [InlineData(180.0)]
    public void MeanAndUncertaintyMatchPosturesDrawnFromTheCap(double tilt)
    {
        var d = InputDistribution.OrientationWithinTilt(Gamma, Calibration, tilt);
        var shifts = OrientationShift.SampleWithinTilt(Calibration, tilt, 400_000, seed: 12).Select(p => Gamma.Dot(p.Up - Calibration.Up)).ToArray();
        double mean = shifts.Average();
        double sd = Math.Sqrt(shifts.Sum(s => (s - mean) * (s - mean)) / (shifts.Length - 1));
        // standard error of the mean sd / sqrt(N); of the standard deviation about sd / sqrt(2N)
        Check.Absolute(mean, d.MeanShift, 4 * sd / Math.Sqrt(shifts.Length), $"mean at {tilt}");
        Check.Relative(sd, d.StandardUncertainty, 4 / Math.Sqrt(2.0 * shifts.Length) + 1e-3, $"u at {tilt}");
        Assert.True(shifts.Max(Math.Abs) <= d.HalfWidth * (1 + 1e-12));
    }

    [Fact]
    public void MonteCarloSamplesTheGeometryAroundItsMeanShift()
    {
        var c = Contribution.ForOrientation("orientation", Gamma, Calibration, 30);
        var budget = UncertaintyBudget.Create([c], coverageProbability: 0.95);
        var gum = budget.Evaluate();
        var mc = CalBudget.Core.MonteCarlo.MonteCarloEngine.Run(budget, new CalBudget.Core.MonteCarlo.MonteCarloOptions { Trials = 1_000_000, Seed = 2 }, gum);
        Check.Absolute(c.Estimate, mc.Estimate, 0.01 * c.StandardUncertainty, "mean");
        Check.Relative(c.StandardUncertainty, mc.StandardUncertainty, 0.005, "sd");
        double halfWidth = c.Distribution.HalfWidth;
        Assert.InRange(mc.CoverageInterval.Low, -halfWidth, halfWidth);
        Assert.InRange(mc.CoverageInterval.High, -halfWidth, halfWidth);
        Assert.Equal(c.StandardUncertainty, gum.CombinedStandardUncertainty);
    }

    [Fact]
    public void OrientationContributionsCannotBeCorrelated()
    {
        var o = Contribution.ForOrientation("orientation", Gamma, Calibration, 20);
        var n = Contribution.Create("reference", InputDistribution.NormalFromStandard(1e-12));
        var ex = Assert.Throws<MetrologyException>(() => UncertaintyBudget.Create([o, n], [Correlation.Between("orientation", "reference", 0.3)]));
        Assert.True(ex.NotComputable);
    }
}
