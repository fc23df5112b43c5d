using System.Globalization;
using System.Text.Json;

namespace CalBudget.Api.Analytics;

/// <summary>
/// Reads a stability request from its buffered JSON body. The readings array, which is nearly all of a large body, is
/// parsed by a strict scanner on both cores (JSON numbers and null only); everything else, and any body the scanner does
/// not accept, goes through the serializer with the service's settings, so errors read exactly as for every other
/// operation. The result is the same either way: the scanner is a faster route, not another contract.
/// </summary>
public static class StabilityBody
{
    private const int ParallelFrom = 1 << 16;

    /// <summary>The request and its readings (NaN for a gap), or a JsonException as the serializer would raise it.</summary>
    public static (StabilityRequest Request, double[]? Values) Read(ReadOnlyMemory<byte> body, JsonSerializerOptions options)
    {
        if (TryFast(body, options) is { } fast)
        {
            return fast;
        }

        var request = JsonSerializer.Deserialize<StabilityRequest>(body.Span, options) ?? throw new JsonException("The body is null.", "$", 0, 0);
        return (request, request.Values?.Select(v => v ?? double.NaN).ToArray());
    }

    private static (StabilityRequest, double[]?)? TryFast(ReadOnlyMemory<byte> memory, JsonSerializerOptions options)
    {
        var body = memory.Span;
        var reader = new Utf8JsonReader(body, new JsonReaderOptions { MaxDepth = 16 });
        try
        {
            if (!reader.Read() || reader.TokenType != JsonTokenType.StartObject)
            {
                return null;
            }

            while (reader.Read() && reader.TokenType == JsonTokenType.PropertyName)
            {
                bool isValues = reader.CurrentDepth == 1 && reader.ValueTextEquals("values"u8);
                if (!reader.Read())
                {
                    return null;
                }

                if (isValues && reader.TokenType == JsonTokenType.StartArray)
                {
                    int start = (int)reader.TokenStartIndex;
                    int end = body[start..].IndexOf((byte)']');
                    if (end < 0 || ParseArray(memory.Slice(start + 1, end - 1)) is not { } values)
                    {
                        return null;
                    }

                    // the rest of the request, with the readings left out, is read by the serializer as usual
                    byte[] rest = new byte[start + 4 + body.Length - (start + end + 1)];
                    body[..start].CopyTo(rest);
                    "null"u8.CopyTo(rest.AsSpan(start));
                    body[(start + end + 1)..].CopyTo(rest.AsSpan(start + 4));
                    var request = JsonSerializer.Deserialize<StabilityRequest>(rest, options);
                    return request is { Values: null } ? (request, values) : null;
                }

                if (!reader.TrySkip())
                {
                    return null;
                }
            }

            return null;
        }
        catch (JsonException)
        {
            return null; // the serializer's route says what is wrong
        }
    }

    // The inside of a JSON array of numbers and nulls; null when it holds anything else.
    private static double[]? ParseArray(ReadOnlyMemory<byte> memory)
    {
        var inside = memory.Span;
        if (inside.Trim(" \t\r\n"u8).IsEmpty)
        {
            return [];
        }

        int count = inside.Count((byte)',') + 1;
        double[] values = new double[count];
        if (count < ParallelFrom)
        {
            return ParseRun(inside, values, 0) == count ? values : null;
        }

        // split at the comma nearest the middle; each half fills its own stretch of the array
        int middle = inside.Length / 2;
        int comma = middle + inside[middle..].IndexOf((byte)',');
        int firstCount = inside[..comma].Count((byte)',') + 1;
        int a = 0, b = 0;
        Parallel.Invoke(
            () => a = ParseRun(memory.Span[..comma], values, 0),
            () => b = ParseRun(memory.Span[(comma + 1)..], values, firstCount));
        return a == firstCount && b == count - firstCount ? values : null;
    }

    // Comma-separated JSON numbers or nulls into values[at..]; the number read, or -1 at the first thing that is not one.
    private static int ParseRun(ReadOnlySpan<byte> text, double[] values, int at)
    {
        int n = 0;
        int i = 0;
        while (true)
        {
            while (i < text.Length && IsSpace(text[i]))
            {
                i++;
            }

            int start = i;
            if (text[start..].StartsWith("null"u8))
            {
                values[at + n] = double.NaN;
                i += 4;
            }
            else
            {
                i = NumberEnd(text, i);
                if (i < 0 || !FastDouble.TryParse(text[start..i], out values[at + n]))
                {
                    return -1;
                }
            }

            n++;
            while (i < text.Length && IsSpace(text[i]))
            {
                i++;
            }

            if (i == text.Length)
            {
                return n;
            }

            if (text[i] != (byte)',')
            {
                return -1;
            }

            i++;
        }
    }

    // The end of a JSON number (RFC 8259 section 6) starting at i, or -1.
    private static int NumberEnd(ReadOnlySpan<byte> t, int i)
    {
        if (i < t.Length && t[i] == (byte)'-')
        {
            i++;
        }

        if (i >= t.Length || !IsDigit(t[i]))
        {
            return -1;
        }

        if (t[i] == (byte)'0')
        {
            i++;
        }
        else
        {
            while (i < t.Length && IsDigit(t[i]))
            {
                i++;
            }
        }

        if (i < t.Length && t[i] == (byte)'.')
        {
            int d = ++i;
            while (i < t.Length && IsDigit(t[i]))
            {
                i++;
            }

            if (i == d)
            {
                return -1;
            }
        }

        if (i < t.Length && (t[i] | 0x20) == (byte)'e')
        {
            i++;
            if (i < t.Length && t[i] is (byte)'+' or (byte)'-')
            {
                i++;
            }

            int d = i;
            while (i < t.Length && IsDigit(t[i]))
            {
                i++;
            }

            if (i == d)
            {
                return -1;
            }
        }

        return i;
    }

    private static bool IsDigit(byte c) => (uint)(c - '0') <= 9;

    private static bool IsSpace(byte c) => c is (byte)' ' or (byte)'\t' or (byte)'\r' or (byte)'\n';
}
