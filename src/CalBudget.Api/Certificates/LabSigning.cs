using System.Security.Cryptography;
using System.Security.Cryptography.X509Certificates;
using CalBudget.Reports;

namespace CalBudget.Api.Certificates;

/// <summary>A signing certificate that cannot be used: which file and why. The service does not start with one.</summary>
/// <param name="message">What is wrong.</param>
public sealed class SigningCertificateException(string message) : Exception(message);

/// <summary>
/// The laboratory's key for signing issued PDFs: the PKCS#12 file of <c>CalBudget:SigningCertificatePath</c> (with
/// <c>SigningCertificatePassword</c>); without one, outside Production, a self-signed demo certificate made once in the
/// data directory (and said so on every certificate it signs); in Production without one, no certificate is issued.
/// </summary>
public static class LabSigning
{
    /// <summary>The file the self-signed demo certificate is kept in, under the data directory.</summary>
    public const string DemoFile = "signing/self-signed-demo.p12";

    /// <summary>The signature to use, or null when none may be used (Production without a configured certificate).</summary>
    public static CertificateSignature? Load(string? path, string? password, string dataDirectory, string labName, bool production, TimeProvider time)
    {
        ArgumentNullException.ThrowIfNull(time);
        if (!string.IsNullOrWhiteSpace(path))
        {
            X509Certificate2 certificate;
            try
            {
                certificate = X509CertificateLoader.LoadPkcs12FromFile(path, password, X509KeyStorageFlags.EphemeralKeySet);
            }
            catch (Exception ex) when (ex is CryptographicException or IOException or UnauthorizedAccessException)
            {
                throw new SigningCertificateException($"CalBudget:SigningCertificatePath {path}: not a readable PKCS#12 file with that password ({ex.Message}).");
            }

            return certificate.HasPrivateKey
                ? new CertificateSignature(certificate, false)
                : throw new SigningCertificateException($"CalBudget:SigningCertificatePath {path}: the certificate has no private key to sign with.");
        }

        if (production)
        {
            return null;
        }

        string file = Path.Combine(Path.GetFullPath(dataDirectory), DemoFile);
        if (!File.Exists(file))
        {
            Directory.CreateDirectory(Path.GetDirectoryName(file)!);
            // ECDSA P-256: made in a millisecond (an RSA key takes a tenth of a second at every first start of a test host)
            using var key = ECDsa.Create(ECCurve.NamedCurves.nistP256);
            var name = new X500DistinguishedNameBuilder();
            name.AddCommonName($"{labName} (self-signed demo, not for production)");
            name.AddOrganizationName("CalBudget demo");
            var request = new CertificateRequest(name.Build(), key, HashAlgorithmName.SHA256);
            request.CertificateExtensions.Add(new X509KeyUsageExtension(X509KeyUsageFlags.DigitalSignature | X509KeyUsageFlags.NonRepudiation, critical: true));
            request.CertificateExtensions.Add(new X509BasicConstraintsExtension(false, false, 0, critical: true));
            var now = time.GetUtcNow();
            using var made = request.CreateSelfSigned(now.AddDays(-1), now.AddYears(5));
            File.WriteAllBytes(file, made.Export(X509ContentType.Pkcs12));
        }

        return new CertificateSignature(X509CertificateLoader.LoadPkcs12FromFile(file, null, X509KeyStorageFlags.EphemeralKeySet), true);
    }
}
