using System.Globalization;
using Microsoft.AspNetCore.Http.Timeouts;

namespace CalBudget.Api.Hosting;

/// <summary>
/// Time limits per request with ASP.NET Core's request-timeout middleware: <see cref="CalBudgetOptions.RequestTimeout"/>
/// for every endpoint, <see cref="CalBudgetOptions.LongRequestTimeout"/> for uploads of readings. At the limit the request's
/// cancellation token fires (the computations stop between chunks of work: Monte Carlo trials, stability factors) and the
/// client gets 503 problem details with Retry-After; nothing half-done is stored, since every write is one transaction.
/// </summary>
public static class RequestTimeLimits
{
    /// <summary>The policy name for endpoints that take large uploads.</summary>
    public const string LongPolicy = "long";

    /// <summary>Registers the policies from the service's settings.</summary>
    public static IServiceCollection AddCalBudgetRequestTimeouts(this IServiceCollection services, CalBudgetOptions settings)
    {
        ArgumentNullException.ThrowIfNull(settings);
        services.AddRequestTimeouts(o =>
        {
            o.DefaultPolicy = Policy(settings.RequestTimeout);
            o.AddPolicy(LongPolicy, Policy(settings.LongRequestTimeout));
        });
        return services;
    }

    private static RequestTimeoutPolicy Policy(TimeSpan limit) => new()
    {
        Timeout = limit,
        TimeoutStatusCode = StatusCodes.Status503ServiceUnavailable,
        WriteTimeoutResponse = async context =>
        {
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
        },
    };
}
