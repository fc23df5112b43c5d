using Microsoft.AspNetCore.Http.Features;
using Microsoft.Extensions.Options;

namespace CalBudget.Api.Hosting;

/// <summary>Raised by the guarded request body when more bytes arrive than the limit allows.</summary>
public sealed class RequestBodyTooLargeException(long limit)
    : Exception($"The request body is larger than the limit of {limit} bytes.")
{
    /// <summary>The limit in bytes.</summary>
    public long Limit { get; } = limit;
}

/// <summary>
/// Enforces <see cref="CalBudgetOptions.MaxRequestBodyBytes"/> for every server (Kestrel and the test host alike):
/// a declared Content-Length over the limit is refused with 413 before any byte is read, so a client waiting on
/// <c>Expect: 100-continue</c> gets 413 instead of 100; a body without a length is counted as it is read.
/// </summary>
public sealed class RequestBodyLimitMiddleware(RequestDelegate next, IOptions<CalBudgetOptions> options)
{
    private readonly long _limit = options.Value.MaxRequestBodyBytes;
    private readonly long _uploadLimit = Math.Max(options.Value.MaxReadingsUploadBytes, options.Value.MaxRequestBodyBytes);

    /// <summary>Runs the check.</summary>
    public async Task InvokeAsync(HttpContext context)
    {
        // Routing has run: an endpoint that takes uploads of readings has the larger limit.
        long limit = context.GetEndpoint()?.Metadata.GetMetadata<Calibrations.LargeUploadMetadata>() is null ? _limit : _uploadLimit;
        if (context.Request.ContentLength is long length && length > limit)
        {
            throw new RequestBodyTooLargeException(limit);
        }

        // This stream does the counting, so the server's own limit (which would surface as an I/O error) is lifted.
        var feature = context.Features.Get<IHttpMaxRequestBodySizeFeature>();
        if (feature is { IsReadOnly: false })
        {
            feature.MaxRequestBodySize = null;
        }

        context.Request.Body = new LimitedStream(context.Request.Body, limit);
        await next(context);
    }

    private sealed class LimitedStream(Stream inner, long limit) : Stream
    {
        private long _read;

        public override bool CanRead => true;

        public override bool CanSeek => false;

        public override bool CanWrite => false;

        public override long Length => throw new NotSupportedException();

        public override long Position { get => _read; set => throw new NotSupportedException(); }

        public override int Read(byte[] buffer, int offset, int count) => Count(inner.Read(buffer, offset, count));

        public override async ValueTask<int> ReadAsync(Memory<byte> buffer, CancellationToken cancellationToken = default) =>
            Count(await inner.ReadAsync(buffer, cancellationToken));

        public override Task<int> ReadAsync(byte[] buffer, int offset, int count, CancellationToken cancellationToken) =>
            ReadAsync(buffer.AsMemory(offset, count), cancellationToken).AsTask();

        public override void Flush() { }

        public override long Seek(long offset, SeekOrigin origin) => throw new NotSupportedException();

        public override void SetLength(long value) => throw new NotSupportedException();

        public override void Write(byte[] buffer, int offset, int count) => throw new NotSupportedException();

        private int Count(int n)
        {
            _read += n;
            if (_read > limit)
            {
                throw new RequestBodyTooLargeException(limit);
            }

            return n;
        }
    }
}
