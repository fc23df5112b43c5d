namespace CalBudget.Api.Hosting;

/// <summary>The service's settings, section <c>CalBudget</c> (environment variables <c>CalBudget__Name</c>).</summary>
public sealed class CalBudgetOptions
{
    /// <summary>The configuration section.</summary>
    public const string Section = "CalBudget";

    /// <summary>The address used when neither <c>--urls</c> nor <c>ASPNETCORE_URLS</c> names one.</summary>
    public const string DefaultUrl = "http://127.0.0.1:5080";

    /// <summary>Where the database file lives; relative paths are taken from the working directory. Created on start.</summary>
    public string DataDirectory { get; set; } = "./data";

    /// <summary>The folder of the budget templates (one JSON file each); relative paths from the service's own folder.</summary>
    public string TemplatesDirectory { get; set; } = "templates";

    /// <summary>A folder of TrueType fonts for certificates (a regular and a bold .ttf); null searches the system font folders.</summary>
    public string? FontDirectory { get; set; }

    /// <summary>The laboratory's PKCS#12 file (certificate and private key) that signs issued PDFs; empty: a self-signed demo certificate outside Production, none in Production.</summary>
    public string? SigningCertificatePath { get; set; }

    /// <summary>The password of <see cref="SigningCertificatePath"/>.</summary>
    public string? SigningCertificatePassword { get; set; }

    /// <summary>
    /// The certificate number pattern: {yyyy}, {yy}, {MM} from the issue date and {seq} (or {seq:0000}, zero-padded) counting
    /// the certificates whose numbers share the text before it.
    /// </summary>
    public string CertificateNumberPattern { get; set; } = "HTF-{yyyy}-{seq:0000}";

    /// <summary>The largest request body accepted, in bytes (413 beyond it).</summary>
    public long MaxRequestBodyBytes { get; set; } = 32L * 1024 * 1024;

    /// <summary>The largest upload of readings accepted as text/csv, in bytes (413 beyond it); JSON readings keep <see cref="MaxRequestBodyBytes"/>.</summary>
    public long MaxReadingsUploadBytes { get; set; } = 256L * 1024 * 1024;

    /// <summary>The ceiling on Monte Carlo trials per evaluation (422 beyond it).</summary>
    public long MonteCarloMaxTrials { get; set; } = Core.MonteCarlo.MonteCarloOptions.DefaultMaxTrials;

    /// <summary>The lab's minimum test uncertainty ratio (T_U - T_L) / 2U for simple acceptance; below it a statement of conformity by simple acceptance needs a stated reason (cal-lab practice: 4).</summary>
    public double MinimumTestUncertaintyRatio { get; set; } = 4;

    /// <summary>Requests per API key (or, without a key, per client address) in each 10-second window; 429 with Retry-After beyond.</summary>
    public int RequestsPer10Seconds { get; set; } = 1200;

    /// <summary>Sign-in attempts per client address in each minute; 429 with Retry-After beyond.</summary>
    public int SignInAttemptsPerMinute { get; set; } = 20;

    /// <summary>How long a verified API key is remembered before the database is asked again (0 turns the cache off).</summary>
    public TimeSpan KeyCacheLifetime { get; set; } = TimeSpan.FromSeconds(5);

    /// <summary>How long a request may take before it is stopped with 503 (uploads of readings: <see cref="LongRequestTimeout"/>).</summary>
    public TimeSpan RequestTimeout { get; set; } = TimeSpan.FromSeconds(30);

    /// <summary>How long an upload of readings may take before it is stopped with 503.</summary>
    public TimeSpan LongRequestTimeout { get; set; } = TimeSpan.FromMinutes(5);

    /// <summary>How long a graceful shutdown waits for requests in flight.</summary>
    public TimeSpan ShutdownTimeout { get; set; } = TimeSpan.FromSeconds(30);
}
