using System.Globalization;
using System.Threading.RateLimiting;
using Microsoft.AspNetCore.RateLimiting;
using Microsoft.Extensions.Options;

namespace CalBudget.Api.Hosting;

/// <summary>
/// Abuse limits with ASP.NET Core's rate limiter: a fixed window of requests per API key (by its public key id, so a
/// wrong secret counts against the key it names) or, without a key, per client address; and sign-in attempts per
/// client address. Beyond a limit: 429 problem details with Retry-After.
/// </summary>
public static class RateLimits
{
    /// <summary>Registers the limiter with the configured limits.</summary>
    public static IServiceCollection AddCalBudgetRateLimits(this IServiceCollection services)
    {
        services.AddRateLimiter(limiter =>
        {
            limiter.RejectionStatusCode = StatusCodes.Status429TooManyRequests;
            limiter.OnRejected = async (context, ct) =>
            {
                var response = context.HttpContext.Response;
                int seconds = context.Lease.TryGetMetadata(MetadataName.RetryAfter, out var retry) ? (int)Math.Ceiling(retry.TotalSeconds) : 10;
                response.Headers.RetryAfter = seconds.ToString(CultureInfo.InvariantCulture);
                var problems = context.HttpContext.RequestServices.GetRequiredService<IProblemDetailsService>();
                await problems.WriteAsync(new ProblemDetailsContext
                {
                    HttpContext = context.HttpContext,
                    ProblemDetails = { Status = StatusCodes.Status429TooManyRequests, Title = "Too many requests.", Detail = $"Slow down: try again in {seconds} s." },
                });
            };
            limiter.GlobalLimiter = PartitionedRateLimiter.Create<HttpContext, string>(http =>
            {
                var options = http.RequestServices.GetRequiredService<IOptions<CalBudgetOptions>>().Value;
                string address = http.Connection.RemoteIpAddress?.ToString() ?? "local";
                if (HttpMethods.IsPost(http.Request.Method) && http.Request.Path.Equals("/sign-in", StringComparison.OrdinalIgnoreCase))
                {
                    // per client address (the account's own lock-out covers guessing one name from many addresses)
                    return RateLimitPartition.GetFixedWindowLimiter("sign-in:" + address, _ => new FixedWindowRateLimiterOptions
                    {
                        PermitLimit = Math.Max(1, options.SignInAttemptsPerMinute), Window = TimeSpan.FromMinutes(1), QueueLimit = 0,
                    });
                }

                string authorization = http.Request.Headers.Authorization.ToString();
                string partition = authorization.StartsWith("Bearer cbk_", StringComparison.Ordinal) && authorization.Length >= 27
                    ? string.Concat("key:", authorization.AsSpan(11, 16))
                    : "address:" + address;
                return RateLimitPartition.GetFixedWindowLimiter(partition, _ => new FixedWindowRateLimiterOptions
                {
                    PermitLimit = Math.Max(1, options.RequestsPer10Seconds), Window = TimeSpan.FromSeconds(10), QueueLimit = 0,
                });
            });
        });
        return services;
    }
}
