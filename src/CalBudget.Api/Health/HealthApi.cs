using CalBudget.Api.Hosting;
using CalBudget.Data;
using Dapper;
using Microsoft.AspNetCore.Http.HttpResults;

namespace CalBudget.Api.Health;

/// <summary>The health answer.</summary>
/// <param name="Status">"ok".</param>
/// <param name="Database">"ok" when a query answered.</param>
public sealed record HealthResponse(string Status, string Database);

/// <summary><c>GET /health</c>: no key needed; 200 when the database answers a query, else 503.</summary>
public static class HealthApi
{
    /// <summary>Maps the route.</summary>
    public static IEndpointRouteBuilder MapHealthApi(this IEndpointRouteBuilder routes)
    {
        routes.MapGet("/health", Get).WithTags("Health").AllowAnonymous().WithName("Health")
            .WithSummary("Is the service up and its database reachable?")
            .ProducesProblem(StatusCodes.Status503ServiceUnavailable);
        return routes;
    }

    /// <summary>GET /health.</summary>
    public static async Task<Results<Ok<HealthResponse>, ProblemHttpResult>> Get(IDbConnectionFactory database, ILoggerFactory logs, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(database);
        ArgumentNullException.ThrowIfNull(logs);
        try
        {
            await using var connection = await database.OpenAsync(ct);
            await connection.ExecuteScalarAsync<long>("SELECT 1");
            return TypedResults.Ok(new HealthResponse("ok", "ok"));
        }
        catch (Exception ex) when (ex is not OperationCanceledException)
        {
            Log.DatabaseUnreachable(logs.CreateLogger("CalBudget.Health"), ex);
            return Problems.Status(StatusCodes.Status503ServiceUnavailable, "The database is not reachable.");
        }
    }
}
