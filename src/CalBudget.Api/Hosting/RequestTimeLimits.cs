using System.Globalization;
using Microsoft.Extensions.Options;

namespace CalBudget.Api.Hosting;

/// <summary>
/// Time limits per request: <see cref="CalBudgetOptions.RequestTimeout"/> for every endpoint,
/// <see cref="CalBudgetOptions.LongRequestTimeout"/> for the uploads of readings (marked <see cref="Calibrations.LargeUploadMetadata"/>,
/// which also raises their body limit). At the limit the
/// request's cancellation token fires (the computations stop between chunks of work: Monte Carlo trials, stability
/// factors) and the client gets 503 problem details with Retry-After; nothing half-done is stored, since every write is
/// one transaction. The limits are kept by a thread of their own (<see cref="DeadlineClock"/>), not by timers on the thread
/// pool: Monte Carlo and stability work fills every core from pool threads, and a pool timer then fired only when that
/// work was over.
/// </summary>
public sealed class RequestTimeLimitMiddleware(RequestDelegate next, IOptions<CalBudgetOptions> options)
{
    private readonly TimeSpan _limit = options.Value.RequestTimeout;
    private readonly TimeSpan _longLimit = options.Value.LongRequestTimeout;

    /// <summary>Runs the request under its limit.</summary>
    public async Task InvokeAsync(HttpContext context)
    {
        ArgumentNullException.ThrowIfNull(context);
        var limit = context.GetEndpoint()?.Metadata.GetMetadata<Calibrations.LargeUploadMetadata>() is null ? _limit : _longLimit;
        var original = context.RequestAborted;
        using var limited = CancellationTokenSource.CreateLinkedTokenSource(original);
        using var deadline = DeadlineClock.Shared.CancelAt(limited, DateTime.UtcNow + limit);
        context.RequestAborted = limited.Token;
        try
        {
            await next(context);
        }
        catch (OperationCanceledException) when (limited.IsCancellationRequested && !original.IsCancellationRequested && !context.Response.HasStarted)
        {
            context.Response.Clear();
            context.Response.StatusCode = StatusCodes.Status503ServiceUnavailable;
            context.Response.Headers.RetryAfter = "5";
            var problems = context.RequestServices.GetRequiredService<IProblemDetailsService>();
            await problems.WriteAsync(new ProblemDetailsContext
            {
                HttpContext = context,
                ProblemDetails =
                {
                    Status = StatusCodes.Status503ServiceUnavailable,
                    Title = "The request took longer than its time limit.",
                    Detail = string.Create(CultureInfo.InvariantCulture, $"The limit is {limit.TotalSeconds:G4} s; nothing was stored. Ask for less work (fewer trials or readings) or try again later."),
                },
            });
        }
        finally
        {
            context.RequestAborted = original;
        }
    }
}

/// <summary>
/// Cancels token sources at their deadlines from one thread of its own, which no amount of work on the thread pool can
/// hold up. Registrations are cheap (a lock and a sorted set); disposing one takes it off.
/// </summary>
public sealed class DeadlineClock
{
    private readonly object _gate = new();
    private readonly SortedSet<(DateTime At, long Id)> _order = [];
    private readonly Dictionary<long, CancellationTokenSource> _sources = [];
    private long _next;

    private DeadlineClock()
    {
        new Thread(Run) { IsBackground = true, Name = "request deadlines" }.Start();
    }

    /// <summary>The service's clock.</summary>
    public static DeadlineClock Shared { get; } = new();

    /// <summary>Cancels <paramref name="source"/> at <paramref name="at"/> (UTC) unless the returned registration is disposed first.</summary>
    public IDisposable CancelAt(CancellationTokenSource source, DateTime at)
    {
        lock (_gate)
        {
            long id = ++_next;
            _order.Add((at, id));
            _sources[id] = source;
            if (_order.Min.Id == id)
            {
                Monitor.Pulse(_gate); // an earlier deadline than the clock is waiting for
            }

            return new Registration(this, at, id);
        }
    }

    private void Remove(DateTime at, long id)
    {
        lock (_gate)
        {
            _order.Remove((at, id));
            _sources.Remove(id);
        }
    }

    private void Run()
    {
        while (true)
        {
            CancellationTokenSource? due = null;
            lock (_gate)
            {
                if (_order.Count == 0)
                {
                    Monitor.Wait(_gate);
                    continue;
                }

                var (at, id) = _order.Min;
                var wait = at - DateTime.UtcNow;
                if (wait > TimeSpan.Zero)
                {
                    Monitor.Wait(_gate, wait < TimeSpan.FromSeconds(1) ? wait : TimeSpan.FromSeconds(1));
                    continue;
                }

                _order.Remove((at, id));
                _sources.Remove(id, out due);
            }

            try
            {
                due?.Cancel();
            }
            catch (ObjectDisposedException)
            {
                // the request ended between the two steps
            }
        }
    }

    private sealed class Registration(DeadlineClock clock, DateTime at, long id) : IDisposable
    {
        public void Dispose() => clock.Remove(at, id);
    }
}
