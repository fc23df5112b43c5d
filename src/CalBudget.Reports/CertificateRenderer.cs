using System.Globalization;
using CalBudget.Reports.Fonts;
using PdfSharp;
using PdfSharp.Drawing;
using PdfSharp.Pdf;

namespace CalBudget.Reports;

/// <summary>
/// Lays out a certificate on A4 pages with PDFsharp: a header with the lab and the number on every page, "page n of N"
/// and the caution line in every footer, the sections in the order of ISO/IEC 17025:2017 7.8, the posture drawing and
/// the two plots.
/// </summary>
public sealed class CertificateRenderer(CertificateFonts fonts)
{
    private const double Margin = 45, Top = 72, Bottom = 58;
    private static readonly XColor Ink = XColor.FromArgb(0x1f, 0x2a, 0x36);
    private static readonly XColor Accent = XColor.FromArgb(0x1f, 0x4e, 0x79);
    private static readonly XColor Rule = XColor.FromArgb(0xb8, 0xc4, 0xd0);

    /// <summary>The PDF of <paramref name="content"/>, signed by the laboratory when <paramref name="signature"/> is given.</summary>
    public byte[] Render(CertificateContent content, CertificateSignature? signature = null)
    {
        ArgumentNullException.ThrowIfNull(content);
        using var document = new PdfDocument();
        document.Info.Title = $"{content.Title} {content.Number}";
        document.Info.Author = content.LabName;
        document.Info.Creator = "CalBudget";
        var writer = new Writer(document, fonts.Family, content);
        writer.Body();
        writer.Finish();
        signature?.Attach(document, content, fonts.Family);
        using var stream = new MemoryStream();
        document.Save(stream, closeStream: false);
        return stream.ToArray();
    }

    private sealed class Writer
    {
        private readonly PdfDocument _document;
        private readonly CertificateContent _c;
        private readonly string _family;
        private readonly XFont _text, _bold, _small, _smallBold, _heading, _title;
        private XGraphics? _g;
        private double _y;

        public Writer(PdfDocument document, string family, CertificateContent content)
        {
            _document = document;
            _c = content;
            _family = family;
            _text = new XFont(family, 9);
            _bold = new XFont(family, 9, XFontStyleEx.Bold);
            _small = new XFont(family, 7.5);
            _smallBold = new XFont(family, 7.5, XFontStyleEx.Bold);
            _heading = new XFont(family, 10.5, XFontStyleEx.Bold);
            _title = new XFont(family, 16, XFontStyleEx.Bold);
            NewPage();
        }

        private XGraphics G => _g!;

        private static double Width => PageSize.Width - (2 * Margin);

        private static XSize PageSize => new(595.28, 841.89);

        public void Body()
        {
            Line(_c.Title, _title, Accent);
            Line($"Certificate number {_c.Number}", _heading, Ink);
            _y += 4;
            if (_c.Amendment is { } amendment)
            {
                Box(amendment);
            }

            Fields(_c.Particulars);
            Section("Method", _c.Method);
            Section("Reference standards and metrological traceability", _c.Traceability);
            Section("Environment", _c.Environment);
            PostureSection();
            ResultsSection();
            BudgetSection();
            if (_c.Prediction is { } prediction)
            {
                Section("In-use prediction (not the uncertainty of the result)", prediction);
            }

            if (_c.Conformity is { } conformity)
            {
                Section("Statement of conformity", conformity);
            }

            if (_c.Recall is { } recall)
            {
                Section("Recall interval (asked for by the customer)", recall);
            }

            Plots();
            Section("Statements", _c.Statements);
            Section("Authorisation", _c.Authorisation);
        }

        public void Finish()
        {
            _g?.Dispose();
            _g = null;
            int count = _document.PageCount;
            for (int i = 0; i < count; i++)
            {
                using var g = XGraphics.FromPdfPage(_document.Pages[i], XGraphicsPdfPageOptions.Append);
                double y = PageSize.Height - Bottom + 18;
                g.DrawLine(new XPen(Rule, 0.6), Margin, y - 6, PageSize.Width - Margin, y - 6);
                string page = string.Create(CultureInfo.InvariantCulture, $"Certificate {_c.Number} · page {i + 1} of {count}");
                g.DrawString(page, _smallBold, new XSolidBrush(Ink), new XRect(Margin, y, Width, 10), XStringFormats.TopRight);
                foreach (string line in Wrap(g, _c.Footer, _small, Width - 215))
                {
                    g.DrawString(line, _small, new XSolidBrush(Ink), new XRect(Margin, y, Width, 10), XStringFormats.TopLeft);
                    y += 9;
                }
            }
        }

        private void NewPage()
        {
            _g?.Dispose();
            var page = _document.AddPage();
            page.Width = XUnit.FromPoint(PageSize.Width);
            page.Height = XUnit.FromPoint(PageSize.Height);
            _g = XGraphics.FromPdfPage(page);
            // The header: the lab left, the number right, a rule under both.
            double y = 30;
            G.DrawString(_c.LabName, _bold, new XSolidBrush(Accent), new XRect(Margin, y, Width, 12), XStringFormats.TopLeft);
            G.DrawString(_c.Number, _bold, new XSolidBrush(Ink), new XRect(Margin, y, Width, 12), XStringFormats.TopRight);
            G.DrawString(string.Join(", ", _c.LabAddress), _small, new XSolidBrush(Ink), new XRect(Margin, y + 13, Width, 10), XStringFormats.TopLeft);
            G.DrawLine(new XPen(Accent, 1), Margin, y + 27, PageSize.Width - Margin, y + 27);
            _y = Top;
        }

        private void Room(double height)
        {
            if (_y + height > PageSize.Height - Bottom)
            {
                NewPage();
            }
        }

        private void Line(string text, XFont font, XColor color)
        {
            double h = font.Size * 1.35;
            Room(h);
            G.DrawString(text, font, new XSolidBrush(color), new XRect(Margin, _y, Width, h), XStringFormats.TopLeft);
            _y += h;
        }

        private void Paragraph(string text, XFont font, double indent = 0, double width = -1)
        {
            double w = width > 0 ? width : Width - indent;
            double h = font.Size * 1.3;
            foreach (string line in Wrap(G, text, font, w))
            {
                Room(h);
                G.DrawString(line, font, new XSolidBrush(Ink), new XRect(Margin + indent, _y, w, h), XStringFormats.TopLeft);
                _y += h;
            }
        }

        private void Heading(string text, double keepWithNext = 40)
        {
            Room(18 + keepWithNext);
            _y += 6;
            G.DrawString(text, _heading, new XSolidBrush(Accent), new XRect(Margin, _y, Width, 14), XStringFormats.TopLeft);
            _y += 14;
            G.DrawLine(new XPen(Rule, 0.5), Margin, _y, PageSize.Width - Margin, _y);
            _y += 4;
        }

        private void Section(string title, IReadOnlyList<string> paragraphs)
        {
            Heading(title);
            foreach (string p in paragraphs)
            {
                Paragraph(p, _text);
                _y += 2;
            }
        }

        private void Box(string text)
        {
            var lines = Wrap(G, text, _bold, Width - 16);
            double h = (lines.Count * 9 * 1.3) + 10;
            Room(h);
            G.DrawRectangle(new XPen(Accent, 1), new XSolidBrush(XColor.FromArgb(0xee, 0xf3, 0xf8)), Margin, _y, Width, h);
            double y = _y + 5;
            foreach (string line in lines)
            {
                G.DrawString(line, _bold, new XSolidBrush(Ink), new XRect(Margin + 8, y, Width - 16, 12), XStringFormats.TopLeft);
                y += 9 * 1.3;
            }

            _y += h + 6;
        }

        private void Fields(IReadOnlyList<Field> fields, double labelWidth = 150)
        {
            foreach (var f in fields)
            {
                var lines = Wrap(G, f.Value, _text, Width - labelWidth);
                double h = lines.Count * 9 * 1.3;
                Room(h);
                G.DrawString(f.Label, _bold, new XSolidBrush(Ink), new XRect(Margin, _y, labelWidth, 12), XStringFormats.TopLeft);
                foreach (string line in lines)
                {
                    G.DrawString(line, _text, new XSolidBrush(Ink), new XRect(Margin + labelWidth, _y, Width - labelWidth, 12), XStringFormats.TopLeft);
                    _y += 9 * 1.3;
                }

                _y += 1.5;
            }
        }

        private void PostureSection()
        {
            var p = _c.Posture;
            Heading("Calibration posture", 130);
            double drawing = 120;
            double top = _y;
            double textWidth = Width - drawing - 12;
            Paragraph(p.Words, _bold, 0, textWidth);
            Paragraph(p.Frame, _small, 0, textWidth);
            _y += 3;
            Paragraph(p.Basis, _small, 0, textWidth);
            DrawPosture(new XRect(PageSize.Width - Margin - drawing, top, drawing, 110), p.Up);
            _y = Math.Max(_y, top + 114);
            if (p.Others.Count > 0)
            {
                Paragraph("Expected shift of the result in the other postures the laboratory uses for this instrument:", _text);
                Fields(p.Others, 180);
            }
        }

        private void ResultsSection()
        {
            Heading("Results");
            double[] widths = [70, 150, 170, Width - 390];
            Table(widths, ["condition", "quantity", "value", "note"], _c.Results.Select(r => new[] { r.Condition, r.Quantity, r.Value, r.Note }).ToList());
            Paragraph(_c.UncertaintyStatement, _text);
        }

        private void BudgetSection()
        {
            Heading("Uncertainty budget", 60);
            double[] widths = [120, 95, 62, 50, 62, 48, Width - 437];
            Table(widths, ["contribution", "distribution", "u(x_i)", "c_i", "|c_i| u(x_i)", "nu_i", "share"],
                _c.Budget.Select(b => new[] { b.Name, b.Distribution, b.StandardUncertainty, b.Sensitivity, b.Contribution, b.DegreesOfFreedom, b.Share }).ToList());
            foreach (string s in _c.BudgetSummary)
            {
                Paragraph(s, _text);
            }
        }

        private void Table(double[] widths, string[] header, IReadOnlyList<string[]> rows)
        {
            double rowHeight = 7.5 * 1.35;
            void Row(string[] cells, XFont font, bool shade)
            {
                var wrapped = cells.Select((c, i) => Wrap(G, c, font, widths[i] - 4)).ToArray();
                double h = (wrapped.Max(w => w.Count) * rowHeight) + 3;
                Room(h);
                if (shade)
                {
                    G.DrawRectangle(new XSolidBrush(XColor.FromArgb(0xee, 0xf3, 0xf8)), Margin, _y, Width, h);
                }

                double x = Margin;
                for (int i = 0; i < cells.Length; i++)
                {
                    double y = _y + 1.5;
                    foreach (string line in wrapped[i])
                    {
                        G.DrawString(line, font, new XSolidBrush(Ink), new XRect(x + 2, y, widths[i] - 4, rowHeight), XStringFormats.TopLeft);
                        y += rowHeight;
                    }

                    x += widths[i];
                }

                _y += h;
                G.DrawLine(new XPen(Rule, 0.4), Margin, _y, PageSize.Width - Margin, _y);
            }

            Row(header, _smallBold, shade: true);
            foreach (var r in rows)
            {
                Row(r, _small, shade: false);
            }

            _y += 4;
        }

        private void Plots()
        {
            const int w = 250, h = 140;
            Heading("Frequency stability of the run and history of the instrument", h + 40);
            double top = _y;
            Image(CertificatePlots.Stability(_c.Stability, _family, w, h), Margin, top, w, h);
            Image(CertificatePlots.Drift(_c.Drift, _family, w, h), PageSize.Width - Margin - w, top, w, h);
            _y = top + h + 2;
            double y = _y;
            Paragraph(_c.Stability.Title + ". " + _c.Stability.Note, _small, 0, w);
            double left = _y;
            _y = y;
            Paragraph(_c.Drift.Title + ". " + _c.Drift.Note, _small, Width - w, w);
            _y = Math.Max(_y, left) + 4;
        }

        private void Image(byte[] png, double x, double y, double w, double h)
        {
            using var stream = new MemoryStream(png);
            using var image = XImage.FromStream(stream);
            G.DrawImage(image, x, y, w, h);
        }

        // A box seen obliquely, turned so that its up vector (in the body frame) points up the page, and gravity beside it.
        private void DrawPosture(XRect area, double[] up)
        {
            double[,] r = RotationTo(up);
            (double X, double Y, double Z) Turn(double x, double y, double z) =>
                (r[0, 0] * x + r[0, 1] * y + r[0, 2] * z, r[1, 0] * x + r[1, 1] * y + r[1, 2] * z, r[2, 0] * x + r[2, 1] * y + r[2, 2] * z);
            double cx = area.X + (area.Width * 0.42), cy = area.Y + (area.Height * 0.52), s = 26;
            XPoint Project(double x, double y, double z)
            {
                var (wx, wy, wz) = Turn(x, y, z);
                return new XPoint(cx + (s * (wx + (0.45 * wy))), cy - (s * (wz + (0.3 * wy))));
            }

            const double hw = 1.2, hd = 0.8, hh = 0.45;
            XPoint[] Face(Func<double, double, (double, double, double)> at) =>
                [.. new[] { (-1.0, -1.0), (1.0, -1.0), (1.0, 1.0), (-1.0, 1.0) }.Select(p => { var (x, y, z) = at(p.Item1, p.Item2); return Project(x, y, z); })];
            var faces = new[]
            {
                (Face((a, b) => (a * hw, -hd, b * hh)), XColor.FromArgb(0x9f, 0xb6, 0xcc)),   // front panel (y = -d/2)
                (Face((a, b) => (a * hw, b * hd, hh)), XColor.FromArgb(0xdd, 0xe6, 0xee)),    // top cover (z = +h/2)
                (Face((a, b) => (hw, a * hd, b * hh)), XColor.FromArgb(0xc4, 0xd2, 0xdf)),    // right side (x = +w/2)
                (Face((a, b) => (a * hw, hd, b * hh)), XColor.FromArgb(0xc4, 0xd2, 0xdf)),    // rear
                (Face((a, b) => (a * hw, b * hd, -hh)), XColor.FromArgb(0xdd, 0xe6, 0xee)),   // bottom
                (Face((a, b) => (-hw, a * hd, b * hh)), XColor.FromArgb(0xc4, 0xd2, 0xdf)),   // left side
            };
            // A convex box: a face is seen when its normal points against the oblique line of sight (-0.45, 1, -0.3),
            // along which points project to the same place on the page.
            var normals = new[] { (0.0, -1.0, 0.0), (0.0, 0.0, 1.0), (1.0, 0.0, 0.0), (0.0, 1.0, 0.0), (0.0, 0.0, -1.0), (-1.0, 0.0, 0.0) };
            var pen = new XPen(Ink, 0.8);
            for (int i = 0; i < faces.Length; i++)
            {
                var (nx, ny, nz) = Turn(normals[i].Item1, normals[i].Item2, normals[i].Item3);
                if ((-0.45 * nx) + ny + (-0.3 * nz) < -1e-9)
                {
                    G.DrawPolygon(pen, new XSolidBrush(faces[i].Item2), faces[i].Item1, XFillMode.Winding);
                }
            }

            // gravity
            double gx = area.Right - 10, gy = area.Y + 18;
            G.DrawLine(new XPen(Accent, 1.4), gx, gy, gx, gy + 60);
            G.DrawPolygon(new XSolidBrush(Accent), [new XPoint(gx - 4, gy + 52), new XPoint(gx + 4, gy + 52), new XPoint(gx, gy + 62)], XFillMode.Winding);
            G.DrawString("g", _bold, new XSolidBrush(Accent), new XRect(gx - 12, gy + 20, 8, 10), XStringFormats.TopLeft);
            G.DrawString("front panel shaded dark", _small, new XSolidBrush(Ink), new XRect(area.X, area.Bottom - 4, area.Width, 9), XStringFormats.TopLeft);
        }

        // The smallest rotation taking the unit up vector to +z (Rodrigues); 180 degrees about x for the upside-down case.
        private static double[,] RotationTo(double[] up)
        {
            double n = Math.Sqrt((up[0] * up[0]) + (up[1] * up[1]) + (up[2] * up[2]));
            double ax = up[0] / n, ay = up[1] / n, az = up[2] / n;
            double vx = ay, vy = -ax, c = az; // a x (0, 0, 1)
            double s2 = (vx * vx) + (vy * vy);
            if (s2 < 1e-18)
            {
                return c > 0 ? new double[,] { { 1, 0, 0 }, { 0, 1, 0 }, { 0, 0, 1 } } : new double[,] { { 1, 0, 0 }, { 0, -1, 0 }, { 0, 0, -1 } };
            }

            double f = (1 - c) / s2;
            double[,] k = { { 0, 0, vy }, { 0, 0, -vx }, { -vy, vx, 0 } };
            var r = new double[3, 3];
            for (int i = 0; i < 3; i++)
            {
                for (int j = 0; j < 3; j++)
                {
                    double kk = 0;
                    for (int m = 0; m < 3; m++)
                    {
                        kk += k[i, m] * k[m, j];
                    }

                    r[i, j] = (i == j ? 1 : 0) + k[i, j] + (f * kk);
                }
            }

            return r;
        }

        private static List<string> Wrap(XGraphics g, string text, XFont font, double width)
        {
            var lines = new List<string>();
            foreach (string paragraph in text.Split('\n'))
            {
                var current = new System.Text.StringBuilder();
                foreach (string word in paragraph.Split(' ', StringSplitOptions.RemoveEmptyEntries))
                {
                    string candidate = current.Length == 0 ? word : current + " " + word;
                    if (current.Length > 0 && g.MeasureString(candidate, font).Width > width)
                    {
                        lines.Add(current.ToString());
                        current.Clear().Append(word);
                    }
                    else
                    {
                        current.Clear().Append(candidate);
                    }
                }

                lines.Add(current.ToString());
            }

            return lines;
        }
    }
}
