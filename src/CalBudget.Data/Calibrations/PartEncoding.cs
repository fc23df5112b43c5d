using System.IO.Compression;

namespace CalBudget.Data.Calibrations;

/// <summary>
/// How the stored parts of an upload are encoded: raw DEFLATE (RFC 1951) at the fastest level. Readings text shrinks to a
/// third or less, which matters more than the CPU it costs where the disk is the slow part of a large upload.
/// </summary>
public static class PartEncoding
{
    /// <summary>The parts are the bytes as received.</summary>
    public const string Identity = "identity";

    /// <summary>Each part is compressed on its own.</summary>
    public const string Deflate = "deflate";

    /// <summary>Compresses one part.</summary>
    public static byte[] Compress(ReadOnlySpan<byte> raw)
    {
        using var output = new MemoryStream(raw.Length / 3 + 64);
        using (var deflate = new DeflateStream(output, CompressionLevel.Fastest, leaveOpen: true))
        {
            deflate.Write(raw);
        }

        return output.ToArray();
    }

    /// <summary>Compresses one part (for a task).</summary>
    public static byte[] CompressPart(byte[] raw) => Compress(raw);

    /// <summary>The bytes of a compressed part.</summary>
    public static byte[] Inflate(byte[] stored)
    {
        using var input = new MemoryStream(stored);
        using var inflate = new DeflateStream(input, CompressionMode.Decompress);
        using var output = new MemoryStream(stored.Length * 4);
        inflate.CopyTo(output);
        return output.ToArray();
    }
}
