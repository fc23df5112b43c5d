using System.Buffers;
using System.Text.Json;

namespace CalBudget.Api.Analytics;

/// <summary>A stability request and its readings (NaN for a gap); the readings may live in a pooled buffer until disposed.</summary>
public sealed class StabilityInput : IDisposable
{
    private double[]? _pooled;

    internal StabilityInput(StabilityRequest request, double[]? values, int count, bool pooled)
    {
        Request = request;
        Values = values is null ? null : values.AsMemory(0, count);
        _pooled = pooled ? values : null;
    }

    /// <summary>The request; its <see cref="StabilityRequest.Values"/> is null when the readings were read separately.</summary>
    public StabilityRequest Request { get; }

    /// <summary>The readings, or null when the body had none.</summary>
    public ReadOnlyMemory<double>? Values { get; }

    /// <summary>Gives a pooled buffer back.</summary>
    public void Dispose()
    {
        if (_pooled is not null)
        {
            ArrayPool<double>.Shared.Return(_pooled);
            _pooled = null;
        }
    }
}

/// <summary>
/// Reads a stability request. The readings array, which is nearly all of a large body, is parsed by a strict scanner (JSON
/// numbers and null only) while the body is still arriving, and what remains when it has arrived is split between both
/// cores; everything else, and any body the scanner does not accept, goes through the serializer with the service's
/// settings, so errors read exactly as for every other operation. The result is the same either way: the scanner is a
/// faster route, not another contract.
/// </summary>
public static class StabilityBody
{
    private const int ParallelFrom = 1 << 16;

    /// <summary>Reads the request from its body as it arrives; a JsonException as the serializer would raise it.</summary>
    public static async Task<StabilityInput> ReadAsync(HttpRequest http, JsonSerializerOptions options, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(http);
        if (http.ContentLength is not long declared || declared > Array.MaxLength)
        {
            using var copy = new MemoryStream();
            await http.Body.CopyToAsync(copy, ct);
            return Buffered(copy.GetBuffer().AsMemory(0, (int)copy.Length), options);
        }

        int length = (int)declared;
        byte[] body = ArrayPool<byte>.Shared.Rent(length);
        Follower? follower = null;
        try
        {
            int received = 0;
            var prefix = new PrefixScan();
            while (received < length)
            {
                int n = await http.Body.ReadAsync(body.AsMemory(received, length - received), ct);
                if (n == 0)
                {
                    break;
                }

                received += n;
                if (follower is null && prefix.FindValues(body.AsSpan(0, received)) is int arrayStart)
                {
                    follower = new Follower(body, arrayStart, length);
                }

                follower?.Arrived(received);
            }

            if (follower is not null)
            {
                var finishing = follower;
                follower = null;
                if (await finishing.FinishAsync(received) is { } r)
                {
                    if (RestOf(body.AsSpan(0, received), r.ArrayStart, r.ArrayEnd, options) is { } request)
                    {
                        return new StabilityInput(request, r.Values, r.Count, pooled: true);
                    }

                    ArrayPool<double>.Shared.Return(r.Values);
                }
            }

            return Buffered(body.AsMemory(0, received), options);
        }
        finally
        {
            if (follower is not null)
            {
                await follower.AbandonAsync();
            }

            ArrayPool<byte>.Shared.Return(body);
        }
    }

    private static StabilityInput Buffered(ReadOnlyMemory<byte> memory, JsonSerializerOptions options)
    {
        var body = memory.Span;
        var prefix = new PrefixScan();
        if (prefix.FindValues(body) is int start)
        {
            int end = body[start..].IndexOf((byte)']');
            if (end > 0)
            {
                var inside = memory.Slice(start + 1, end - 1);
                int count = Capacity(inside.Span);
                double[] values = ArrayPool<double>.Shared.Rent(Math.Max(count, 1));
                if (Parse(inside, values, 0, parallel: true) == count && RestOf(body, start, start + end, options) is { } request)
                {
                    return new StabilityInput(request, values, count, pooled: true);
                }

                ArrayPool<double>.Shared.Return(values);
            }
        }

        var whole = JsonSerializer.Deserialize<StabilityRequest>(body, options) ?? throw new JsonException("The body is null.", "$", 0, 0);
        var readings = whole.Values?.Select(v => v ?? double.NaN).ToArray();
        return new StabilityInput(whole, readings, readings?.Length ?? 0, pooled: false);
    }

    // The request without its readings: the body with the array from '[' at arrayStart to ']' at arrayEnd replaced by null,
    // read by the serializer; null when it refuses that or when a second "values" property follows.
    private static StabilityRequest? RestOf(ReadOnlySpan<byte> body, int arrayStart, int arrayEnd, JsonSerializerOptions options)
    {
        byte[] rest = new byte[arrayStart + 4 + body.Length - (arrayEnd + 1)];
        body[..arrayStart].CopyTo(rest);
        "null"u8.CopyTo(rest.AsSpan(arrayStart));
        body[(arrayEnd + 1)..].CopyTo(rest.AsSpan(arrayStart + 4));
        try
        {
            return JsonSerializer.Deserialize<StabilityRequest>(rest, options) is { Values: null } request ? request : null;
        }
        catch (JsonException)
        {
            return null; // the serializer's route over the whole body says what is wrong
        }
    }

    // The most values a stretch of the array's inside can hold: one more than its commas (an empty inside holds none).
    private static int Capacity(ReadOnlySpan<byte> inside) =>
        inside.Trim(" \t\r\n"u8).IsEmpty ? 0 : inside.Count((byte)',') + 1;

    // The inside of (a stretch of) a JSON array of numbers and nulls into values[at..]; the count read, or -1 at anything
    // else. A large stretch is split at the comma nearest its middle and the halves read on both cores.
    private static int Parse(ReadOnlyMemory<byte> memory, double[] values, int at, bool parallel)
    {
        var inside = memory.Span;
        if (inside.Trim(" \t\r\n"u8).IsEmpty)
        {
            return 0;
        }

        if (!parallel || inside.Length < ParallelFrom)
        {
            return ParseRun(inside, values, at);
        }

        int middle = inside.Length / 2;
        int comma = middle + inside[middle..].IndexOf((byte)',');
        if (comma < middle)
        {
            return ParseRun(inside, values, at);
        }

        int firstCount = inside[..comma].Count((byte)',') + 1;
        int a = 0, b = 0;
        Parallel.Invoke(
            () => a = ParseRun(memory.Span[..comma], values, at),
            () => b = ParseRun(memory.Span[(comma + 1)..], values, at + firstCount));
        return a == firstCount && b >= 0 ? a + b : -1;
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

            if (text[i..].StartsWith("null"u8))
            {
                values[at + n] = double.NaN;
                i += 4;
            }
            else if ((i = FastDouble.Read(text, i, out values[at + n])) < 0)
            {
                return -1;
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

    private static bool IsSpace(byte c) => c is (byte)' ' or (byte)'\t' or (byte)'\r' or (byte)'\n';

    /// <summary>
    /// Walks the top-level object as its bytes arrive, until the "values" property's array opens; gives the index of its
    /// '[' then, null while more bytes are needed or when the body is not such an object (the serializer will say why).
    /// </summary>
    private sealed class PrefixScan
    {
        private JsonReaderState _state = new(new JsonReaderOptions { MaxDepth = 16 });
        private int _consumed;
        private bool _valuesNext;
        private bool _givenUp;

        public int? FindValues(ReadOnlySpan<byte> received)
        {
            if (_givenUp)
            {
                return null;
            }

            var reader = new Utf8JsonReader(received[_consumed..], isFinalBlock: false, _state);
            try
            {
                while (reader.Read())
                {
                    if (reader.CurrentDepth == 0 && reader.TokenType != JsonTokenType.StartObject)
                    {
                        _givenUp = true;
                        return null;
                    }

                    if (_valuesNext)
                    {
                        _valuesNext = false;
                        if (reader.TokenType == JsonTokenType.StartArray)
                        {
                            _givenUp = true; // found: nothing more to look for
                            return _consumed + (int)reader.TokenStartIndex;
                        }
                    }

                    _valuesNext = reader.TokenType == JsonTokenType.PropertyName && reader.CurrentDepth == 1 && reader.ValueTextEquals("values"u8);
                }
            }
            catch (JsonException)
            {
                _givenUp = true;
                return null;
            }

            _consumed += (int)reader.BytesConsumed;
            _state = reader.CurrentState;
            return null;
        }
    }

    /// <summary>The readings array's extent in the body and its values (a pooled buffer).</summary>
    private readonly record struct Readings(int ArrayStart, int ArrayEnd, double[] Values, int Count);

    /// <summary>
    /// Parses the readings array on a worker while the rest of the body arrives: each time, up to the last comma received;
    /// at the end, what is left (on both cores when it is large). Gives up, leaving the body to the serializer, at the first
    /// thing that is not a number or null.
    /// </summary>
    private sealed class Follower : IDisposable
    {
        private readonly byte[] _body;
        private readonly int _arrayStart;
        private readonly SemaphoreSlim _arrived = new(0);
        private readonly Task _worker;
        private int _received;
        private volatile bool _complete;
        private double[] _values;
        private int _count;
        private int _position;
        private int _arrayEnd = -1;
        private bool _failed;

        public Follower(byte[] body, int arrayStart, int length)
        {
            _body = body;
            _arrayStart = arrayStart;
            _position = arrayStart + 1;
            _values = ArrayPool<double>.Shared.Rent(Math.Max(16, length / 24));
            _worker = Task.Run(Follow);
        }

        public void Arrived(int received)
        {
            Volatile.Write(ref _received, received);
            if (_arrived.CurrentCount == 0)
            {
                _arrived.Release();
            }
        }

        public async Task<Readings?> FinishAsync(int received)
        {
            Volatile.Write(ref _received, received);
            _complete = true;
            _arrived.Release();
            await _worker;
            Dispose();
            if (_failed || _arrayEnd < 0)
            {
                ArrayPool<double>.Shared.Return(_values);
                return null;
            }

            return new Readings(_arrayStart, _arrayEnd, _values, _count);
        }

        public async Task AbandonAsync()
        {
            _complete = true;
            _arrived.Release();
            try
            {
                await _worker;
            }
            finally
            {
                Dispose();
                ArrayPool<double>.Shared.Return(_values);
            }
        }

        public void Dispose() => _arrived.Dispose();

        private async Task Follow()
        {
            try
            {
                await FollowUntilTheEnd();
            }
            catch (Exception ex) when (ex is IndexOutOfRangeException or ArgumentOutOfRangeException)
            {
                _failed = true; // the body is malformed in a way the scanner did not foresee: the serializer's route decides
            }
        }

        private async Task FollowUntilTheEnd()
        {
            while (!_failed && _arrayEnd < 0)
            {
                await _arrived.WaitAsync();
                bool complete = _complete;
                int received = Volatile.Read(ref _received);
                var pending = _body.AsSpan(_position, received - _position);
                int close = pending.IndexOf((byte)']');
                if (close >= 0)
                {
                    // the array ends here; the rest of the body is the serializer's
                    Take(close, parallel: complete, beforeComma: false);
                    _arrayEnd = _failed ? -1 : _position;
                    return;
                }

                if (complete)
                {
                    _failed = true; // no closing bracket: not for this route
                    return;
                }

                int comma = pending.LastIndexOf((byte)',');
                if (comma >= 0)
                {
                    Take(comma, parallel: false, beforeComma: true);
                    _position++; // past the comma
                }
            }
        }

        // Parses the next `length` bytes (whole numbers) and moves past them. A stretch before a comma holds at least one
        // value; the last one (before the bracket) may be empty only when the array is.
        private void Take(int length, bool parallel, bool beforeComma)
        {
            var stretch = _body.AsMemory(_position, length);
            int capacity = Capacity(stretch.Span);
            if (_count + capacity > _values.Length)
            {
                var larger = ArrayPool<double>.Shared.Rent(Math.Max(2 * _values.Length, _count + capacity));
                _values.AsSpan(0, _count).CopyTo(larger);
                ArrayPool<double>.Shared.Return(_values);
                _values = larger;
            }

            int n = Parse(stretch, _values, _count, parallel);
            if (n != capacity || (capacity == 0 && (beforeComma || _count > 0)))
            {
                _failed = true;
                return;
            }

            _count += n;
            _position += length;
        }
    }
}
