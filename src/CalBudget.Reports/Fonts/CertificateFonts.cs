using System.Collections.Concurrent;
using PdfSharp.Fonts;

namespace CalBudget.Reports.Fonts;

/// <summary>No usable TrueType font was found; the message names the folders searched and what to do.</summary>
public sealed class FontsNotFoundException(string message) : Exception(message);

/// <summary>
/// The regular and bold TrueType faces the certificates are set in, found once at start in a configured folder or the
/// system font folders. Each instance registers a family name of its own with PDFsharp's (process-wide) font resolver,
/// so services with different font folders can share a process.
/// </summary>
public sealed class CertificateFonts
{
    // Families preferred in order: a regular and a bold file name for each.
    private static readonly (string Regular, string Bold)[] Preferred =
    [
        ("DejaVuSans.ttf", "DejaVuSans-Bold.ttf"),
        ("LiberationSans-Regular.ttf", "LiberationSans-Bold.ttf"),
        ("NotoSans-Regular.ttf", "NotoSans-Bold.ttf"),
        ("FreeSans.ttf", "FreeSansBold.ttf"),
        ("arial.ttf", "arialbd.ttf"),
        ("Arial.ttf", "Arial Bold.ttf"),
    ];

    private static int _instances;

    private CertificateFonts(string regularPath, string boldPath, byte[] regular, byte[] bold)
    {
        RegularPath = regularPath;
        BoldPath = boldPath;
        Family = "CalBudget Text " + Interlocked.Increment(ref _instances).ToString(System.Globalization.CultureInfo.InvariantCulture);
        Resolver.Register(Family, regular, bold);
        ScottPlot.Fonts.AddFontFile(Family, regularPath, bold: false, italic: false);
        ScottPlot.Fonts.AddFontFile(Family, boldPath, bold: true, italic: false);
    }

    /// <summary>The family name to ask PDFsharp and ScottPlot for.</summary>
    public string Family { get; }

    /// <summary>The regular face's file.</summary>
    public string RegularPath { get; }

    /// <summary>The bold face's file (the regular one again when the folder has no bold face).</summary>
    public string BoldPath { get; }

    /// <summary>The system font folders searched when no folder is configured.</summary>
    public static IReadOnlyList<string> SystemFolders()
    {
        var folders = new List<string> { "/usr/share/fonts", "/usr/local/share/fonts", "/Library/Fonts", "/System/Library/Fonts" };
        string home = Environment.GetFolderPath(Environment.SpecialFolder.UserProfile);
        if (home.Length > 0)
        {
            folders.Add(Path.Combine(home, ".local", "share", "fonts"));
            folders.Add(Path.Combine(home, ".fonts"));
        }

        string windows = Environment.GetFolderPath(Environment.SpecialFolder.Fonts);
        if (windows.Length > 0)
        {
            folders.Add(windows);
        }

        return folders;
    }

    /// <summary>
    /// Finds the faces in <paramref name="folder"/> (with its subfolders), or in the system folders when it is null;
    /// throws <see cref="FontsNotFoundException"/> naming the folders when none is usable.
    /// </summary>
    public static CertificateFonts Find(string? folder)
    {
        IReadOnlyList<string> folders = folder is null ? SystemFolders() : [folder];
        var files = folders.Where(Directory.Exists)
            .SelectMany(f => Directory.EnumerateFiles(f, "*", new EnumerationOptions { RecurseSubdirectories = true, IgnoreInaccessible = true, MatchCasing = MatchCasing.CaseInsensitive }))
            .Where(f => f.EndsWith(".ttf", StringComparison.OrdinalIgnoreCase))
            .Where(IsTrueType)
            .ToList();
        foreach (var (regular, bold) in Preferred)
        {
            string? r = files.FirstOrDefault(f => Path.GetFileName(f) == regular);
            if (r is not null)
            {
                return Load(r, files.FirstOrDefault(f => Path.GetFileName(f) == bold) ?? r);
            }
        }

        // Any upright face; a bold one of the same stem when there is one.
        static bool Upright(string f) => !Path.GetFileNameWithoutExtension(f).Contains("Italic", StringComparison.OrdinalIgnoreCase)
            && !Path.GetFileNameWithoutExtension(f).Contains("Oblique", StringComparison.OrdinalIgnoreCase);
        string? any = files.Where(Upright).Where(f => !Path.GetFileNameWithoutExtension(f).Contains("Bold", StringComparison.OrdinalIgnoreCase))
            .OrderBy(f => f, StringComparer.Ordinal).FirstOrDefault();
        if (any is not null)
        {
            string stem = Path.GetFileNameWithoutExtension(any).Replace("-Regular", "", StringComparison.OrdinalIgnoreCase);
            string? anyBold = files.Where(Upright).FirstOrDefault(f => Path.GetFileNameWithoutExtension(f).StartsWith(stem, StringComparison.OrdinalIgnoreCase)
                && Path.GetFileNameWithoutExtension(f).Contains("Bold", StringComparison.OrdinalIgnoreCase));
            return Load(any, anyBold ?? any);
        }

        throw new FontsNotFoundException(
            $"No usable TrueType font (.ttf) was found in {string.Join(", ", folders)}. Certificates need one: install a font package " +
            "(on Debian: apt-get install fonts-dejavu-core) or set CalBudget:FontDirectory to a folder holding a regular and a bold .ttf file.");
    }

    private static CertificateFonts Load(string regular, string bold) => new(regular, bold, File.ReadAllBytes(regular), File.ReadAllBytes(bold));

    // A TrueType outline font starts with the version 0x00010000 or the tag "true" (a collection or a CFF font does not).
    private static bool IsTrueType(string path)
    {
        try
        {
            using var stream = File.OpenRead(path);
            Span<byte> head = stackalloc byte[4];
            if (stream.Length < 12 || stream.Read(head) != 4)
            {
                return false;
            }

            return (head[0] == 0 && head[1] == 1 && head[2] == 0 && head[3] == 0) || (head[0] == 't' && head[1] == 'r' && head[2] == 'u' && head[3] == 'e');
        }
        catch (IOException)
        {
            return false;
        }
        catch (UnauthorizedAccessException)
        {
            return false;
        }
    }

    /// <summary>PDFsharp's resolver, installed once per process, serving every registered family.</summary>
    private sealed class Resolver : IFontResolver
    {
        private static readonly ConcurrentDictionary<string, byte[]> Faces = new(StringComparer.Ordinal);
        private static readonly Lock Gate = new();
        private static bool _installed;

        public static void Register(string family, byte[] regular, byte[] bold)
        {
            Faces[family + "|regular"] = regular;
            Faces[family + "|bold"] = bold;
            lock (Gate)
            {
                if (!_installed)
                {
                    GlobalFontSettings.FontResolver = new Resolver();
                    _installed = true;
                }
            }
        }

        public FontResolverInfo? ResolveTypeface(string familyName, bool bold, bool italic)
        {
            string face = familyName + (bold ? "|bold" : "|regular");
            return Faces.ContainsKey(face) ? new FontResolverInfo(face) : null;
        }

        public byte[]? GetFont(string faceName) => Faces.TryGetValue(faceName, out var bytes) ? bytes : null;
    }
}
