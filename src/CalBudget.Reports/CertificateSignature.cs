using System.Security.Cryptography.X509Certificates;
using PdfSharp.Drawing;
using PdfSharp.Pdf;
using PdfSharp.Pdf.Signatures;

namespace CalBudget.Reports;

/// <summary>
/// The laboratory's signature on an issued PDF: a PKCS#7 detached signature (SHA-256) over the whole file but the
/// signature itself, made with PDFsharp 6.2's signature handler and its signer on System.Security.Cryptography.Pkcs.
/// </summary>
/// <param name="Certificate">The laboratory's certificate with its private key.</param>
/// <param name="SelfSigned">True for a self-signed certificate made by the service (demo only); printed on the page.</param>
public sealed record CertificateSignature(X509Certificate2 Certificate, bool SelfSigned)
{
    /// <summary>Attaches the signature to <paramref name="document"/>, drawn as a small box on its last page; it is computed when the document is saved.</summary>
    internal void Attach(PdfDocument document, CertificateContent content, string fontFamily)
    {
        var options = new DigitalSignatureOptions
        {
            ContactInfo = content.LabName,
            Location = string.Join(", ", content.LabAddress),
            Reason = $"Certificate {content.Number} issued by {content.LabName}" + (SelfSigned ? " (self-signed demo certificate, not for production)" : ""),
            AppName = "CalBudget",
            PageIndex = document.PageCount - 1,
            Rectangle = new XRect(45, 68, 340, 40), // PDF space (from the bottom left): just above the footer
            AppearanceHandler = new Appearance(fontFamily, Certificate.GetNameInfo(X509NameType.SimpleName, false), SelfSigned),
        };
        DigitalSignatureHandler.ForDocument(document, new PdfSharpDefaultSigner(Certificate, PdfMessageDigestType.SHA256, null), options);
    }

    // the box drawn where the signature sits, in the certificate's own font (PDFsharp's default asks for a font the host may lack)
    private sealed class Appearance(string family, string signer, bool selfSigned) : PdfSharp.Pdf.Annotations.IAnnotationAppearanceHandler
    {
        public void DrawAppearance(XGraphics gfx, XRect rect)
        {
            var font = new XFont(family, 7);
            var pen = new XPen(XColor.FromArgb(0x1f, 0x4e, 0x79), 0.6);
            gfx.DrawRectangle(pen, 0.5, 0.5, rect.Width - 1, rect.Height - 1);
            gfx.DrawString("Digitally signed by the laboratory", new XFont(family, 7, XFontStyleEx.Bold), XBrushes.Black, 4, 11);
            gfx.DrawString(signer, font, XBrushes.Black, 4, 21);
            gfx.DrawString(selfSigned ? "self-signed demo certificate: not for production" : "verify with any PDF signature validator", font, XBrushes.Black, 4, 31);
        }
    }
}
