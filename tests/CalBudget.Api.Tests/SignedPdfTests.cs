using System.Diagnostics;
using System.Globalization;
using System.Net;
using System.Security.Cryptography;
using System.Security.Cryptography.X509Certificates;
using System.Text;

namespace CalBudget.Api.Tests;

/// <summary>
/// The issued PDF carries the laboratory's digital signature: poppler's pdfsig (an independent verifier) finds it valid,
/// and invalid once one byte is altered; the signer is the configured PKCS#12 certificate, or a self-signed demo
/// certificate outside Production; Production without a signing certificate issues nothing.
/// </summary>
public sealed class SignedPdfTests
{
    private static async Task<byte[]> IssueAsync(ServiceFactory factory)
    {
        var tech = await factory.ClientAsync("technician", holder: "kim");
        var approver = await factory.ClientAsync("approver", holder: "ola");
        long run = await LabRecords.RunWithReadingsAsync(tech, "CB-0901");
        long budget = (await Json.PostAsync(tech, "/api/v1/budgets", $$"""{ "runId": {{run}}, "templateId": "ocxo-counter" }""", HttpStatusCode.Created))["id"]!.GetValue<long>();
        await Json.ReadAsync(await approver.PostAsync($"/api/v1/budgets/{budget}/versions/1/approve", Json.Body("{}")), HttpStatusCode.OK);
        var cert = await Json.PostAsync(tech, "/api/v1/certificates",
            $$"""{ "budgetId": {{budget}}, "version": 1, "receivedAt": "2026-11-27T00:00:00Z", "itemCondition": "no visible damage" }""", HttpStatusCode.Created);
        byte[] pdf = await tech.GetByteArrayAsync($"/api/v1/certificates/{cert["id"]}.pdf");
        // the stored SHA-256 stays the identity of the issued (signed) bytes
        Assert.Equal(cert["pdfSha256"]!.GetValue<string>(), Convert.ToHexStringLower(SHA256.HashData(pdf)));
        return pdf;
    }

    private static string PdfSig(byte[] pdf)
    {
        string file = Path.Combine(Path.GetTempPath(), $"calbudget-signed-{Guid.NewGuid():N}.pdf");
        File.WriteAllBytes(file, pdf);
        try
        {
            var info = new ProcessStartInfo("pdfsig", [file]) { RedirectStandardOutput = true, RedirectStandardError = true };
            using var process = Process.Start(info) ?? throw new InvalidOperationException("pdfsig did not start (apt-get install poppler-utils)");
            string output = process.StandardOutput.ReadToEnd() + process.StandardError.ReadToEnd();
            process.WaitForExit();
            return output;
        }
        finally
        {
            File.Delete(file);
        }
    }

    [Fact]
    public async Task TheIssuedPdfVerifiesAndFailsOnceAlteredByOneByte()
    {
        using var factory = new ServiceFactory();
        byte[] pdf = await IssueAsync(factory);
        string verified = PdfSig(pdf);
        Assert.Contains("Signature Validation: Signature is Valid.", verified, StringComparison.Ordinal);
        Assert.Contains("self-signed demo, not for production", verified, StringComparison.Ordinal);
        Assert.Contains("Total document signed", verified, StringComparison.Ordinal);

        // one byte inside the first content stream, which the signature covers
        int at = Encoding.ASCII.GetString(pdf).IndexOf("stream", StringComparison.Ordinal) + 100;
        var altered = (byte[])pdf.Clone();
        altered[at] ^= 0x01;
        Assert.Contains("Signature Validation: Signature is Invalid.", PdfSig(altered), StringComparison.Ordinal);
    }

    [Fact]
    public async Task TheConfiguredLaboratoryCertificateSigns()
    {
        string folder = Directory.CreateTempSubdirectory("calbudget-signing-").FullName;
        try
        {
            // an invented laboratory certificate (RSA, as a lab's CA might issue), in a PKCS#12 file with a password
            using var rsa = RSA.Create(2048);
            var request = new CertificateRequest("CN=Harrowgate Time and Frequency Laboratory signing, O=Harrowgate", rsa, HashAlgorithmName.SHA256, RSASignaturePadding.Pkcs1);
            using var made = request.CreateSelfSigned(DateTimeOffset.UtcNow.AddDays(-1), DateTimeOffset.UtcNow.AddYears(1));
            string file = Path.Combine(folder, "lab.p12");
            File.WriteAllBytes(file, made.Export(X509ContentType.Pkcs12, "bench-secret"));
            using var factory = new ServiceFactory(settings: new() { ["CalBudget:SigningCertificatePath"] = file, ["CalBudget:SigningCertificatePassword"] = "bench-secret" });
            string verified = PdfSig(await IssueAsync(factory));
            Assert.Contains("Signature Validation: Signature is Valid.", verified, StringComparison.Ordinal);
            Assert.Contains("Harrowgate Time and Frequency Laboratory signing", verified, StringComparison.Ordinal);
            Assert.DoesNotContain("self-signed demo", verified, StringComparison.Ordinal);

            // the wrong password stops the start, naming the setting
            using var wrong = new ServiceFactory(settings: new() { ["CalBudget:SigningCertificatePath"] = file, ["CalBudget:SigningCertificatePassword"] = "guess" });
            var ex = Assert.ThrowsAny<Exception>(() => wrong.CreateClient());
            Assert.Contains("SigningCertificatePath", (ex as CalBudget.Api.Certificates.SigningCertificateException ?? ex.InnerException)?.Message ?? ex.ToString(), StringComparison.Ordinal);
        }
        finally
        {
            Directory.Delete(folder, recursive: true);
        }
    }

    [Fact]
    public async Task ProductionWithoutASigningCertificateIssuesNothing()
    {
        using var factory = new ServiceFactory("Production");
        var tech = await factory.ClientAsync("technician", holder: "kim");
        var approver = await factory.ClientAsync("approver", holder: "ola");
        long run = await LabRecords.RunWithReadingsAsync(tech, "CB-0902");
        long budget = (await Json.PostAsync(tech, "/api/v1/budgets", $$"""{ "runId": {{run}}, "templateId": "ocxo-counter" }""", HttpStatusCode.Created))["id"]!.GetValue<long>();
        await Json.ReadAsync(await approver.PostAsync($"/api/v1/budgets/{budget}/versions/1/approve", Json.Body("{}")), HttpStatusCode.OK);
        var refused = await Json.ProblemAsync(await tech.PostAsync("/api/v1/certificates",
            Json.Body($$"""{ "budgetId": {{budget}}, "version": 1, "receivedAt": "2026-11-27T00:00:00Z", "itemCondition": "no visible damage" }""")), HttpStatusCode.ServiceUnavailable);
        Assert.Contains("SigningCertificatePath", refused["detail"]!.GetValue<string>(), StringComparison.Ordinal);
        Assert.Empty((await Json.ReadAsync(await tech.GetAsync("/api/v1/certificates"), HttpStatusCode.OK))["items"]!.AsArray());
    }
}
