using ScottPlot;

namespace CalBudget.Reports;

/// <summary>The two plots of a certificate, as PNG images drawn with ScottPlot in the certificate's font.</summary>
public static class CertificatePlots
{
    /// <summary>Pixels per point of the PDF: the images are drawn at three times their printed size.</summary>
    public const int Scale = 3;

    /// <summary>The Allan deviation on log-log axes with its confidence intervals.</summary>
    public static byte[] Stability(StabilityPlot data, string family, int widthPoints, int heightPoints)
    {
        ArgumentNullException.ThrowIfNull(data);
        using var plot = NewPlot(family);
        if (data.Tau.Length > 0)
        {
            double[] x = data.Tau.Select(Math.Log10).ToArray();
            double[] y = data.Deviation.Select(Math.Log10).ToArray();
            for (int i = 0; i < x.Length; i++)
            {
                Bar(plot, x[i], Math.Log10(data.Low[i]), Math.Log10(data.High[i]));
            }

            var line = plot.Add.Scatter(x, y);
            line.Color = new Color(0x1f, 0x4e, 0x79);
            line.MarkerSize = 4;
            plot.Axes.Bottom.TickGenerator = LogTicks();
            plot.Axes.Left.TickGenerator = LogTicks();
        }

        plot.Axes.Bottom.Label.Text = "averaging time tau (s)";
        plot.Axes.Left.Label.Text = "overlapping Allan deviation";
        return Png(plot, widthPoints, heightPoints);
    }

    /// <summary>The dated results with their expanded uncertainties and the fitted aging line.</summary>
    public static byte[] Drift(DriftPlot data, string family, int widthPoints, int heightPoints)
    {
        ArgumentNullException.ThrowIfNull(data);
        using var plot = NewPlot(family);
        if (data.FitDays is { Length: > 1 } fx && data.FitOffset is { } fy)
        {
            var fit = plot.Add.ScatterLine(fx, fy);
            fit.Color = new Color(0x7f, 0x7f, 0x7f);
            fit.LinePattern = LinePattern.Dashed;
        }

        if (data.Days.Length > 0)
        {
            for (int i = 0; i < data.Days.Length; i++)
            {
                Bar(plot, data.Days[i], data.Offset[i] - data.ExpandedUncertainty[i], data.Offset[i] + data.ExpandedUncertainty[i]);
            }

            var points = plot.Add.ScatterPoints(data.Days, data.Offset);
            points.Color = new Color(0x1f, 0x4e, 0x79);
            points.MarkerSize = 5;
        }

        plot.Axes.Bottom.Label.Text = data.AxisLabel;
        plot.Axes.Left.Label.Text = "fractional frequency offset";
        return Png(plot, widthPoints, heightPoints);
    }

    // A vertical interval bar with short caps.
    private static void Bar(Plot plot, double x, double low, double high)
    {
        var line = plot.Add.Line(x, low, x, high);
        line.Color = Colors.Black;
        line.LineWidth = 1;
    }

    // Decades labelled 10^n, with minor ticks at 2 ... 9 (the values plotted are log10 of the data).
    private static ScottPlot.TickGenerators.NumericAutomatic LogTicks() => new()
    {
        MinorTickGenerator = new ScottPlot.TickGenerators.LogMinorTickGenerator(),
        IntegerTicksOnly = true,
        LabelFormatter = v => "1E" + Math.Round(v).ToString("0", System.Globalization.CultureInfo.InvariantCulture),
    };

    private static Plot NewPlot(string family)
    {
        var plot = new Plot();
        plot.Font.Set(family);
        plot.ScaleFactor = Scale;
        // sizes in points of the printed plot (the image is drawn at Scale pixels per point)
        foreach (var axis in new IAxis[] { plot.Axes.Bottom, plot.Axes.Left })
        {
            axis.Label.FontSize = 8;
            axis.Label.Bold = false;
            axis.TickLabelStyle.FontSize = 7;
        }

        return plot;
    }

    private static byte[] Png(Plot plot, int widthPoints, int heightPoints) =>
        plot.GetImageBytes(widthPoints * Scale, heightPoints * Scale, ImageFormat.Png);
}
