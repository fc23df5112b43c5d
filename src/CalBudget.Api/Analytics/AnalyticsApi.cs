using System.Text.Json;
using CalBudget.Api.Auth;
using CalBudget.Api.Hosting;
using CalBudget.Core;
using CalBudget.Core.Stability;
using Microsoft.AspNetCore.Http.HttpResults;
using Microsoft.AspNetCore.Http.Json;
using Microsoft.Extensions.Options;

namespace CalBudget.Api.Analytics;

/// <summary>Timebase analytics: frequency stability (and, as they land, orientation and aging).</summary>
public static class AnalyticsApi
{
    /// <summary>The most readings one request may carry.</summary>
    public const int MaxValues = 20_000_000;

    private static readonly Dictionary<string, StabilityStatistic> StatisticNames = Enum.GetValues<StabilityStatistic>()
        .ToDictionary(s => s.ToString().ToLowerInvariant(), s => s, StringComparer.Ordinal);

    /// <summary>Maps the routes.</summary>
    public static IEndpointRouteBuilder MapAnalyticsApi(this IEndpointRouteBuilder routes)
    {
        var group = routes.MapGroup("/api/v1").WithTags("Analytics").RequireAuthorization(Policies.AnyRole);
        group.MapPost("/stability", Stability)
            .WithName("Stability")
            .WithSummary("Frequency-stability statistics (NIST SP 1065) with edf, 68.3 % intervals and noise identification")
            .WithDescription(
                "ADEV, OADEV, MDEV, TDEV, HDEV, OHDEV and TOTDEV from fractional frequency or phase readings, as SP 1065 defines them. " +
                "Each point carries the number of terms, the equivalent degrees of freedom for the noise identified at that tau (computed " +
                "from the definition for Gaussian power-law noise; TOTDEV by SP 1065 Table 7) and the chi-squared 68.3 % interval (SP 1065 " +
                "eq. 45). Noise is identified by the lag-1 autocorrelation method (SP 1065 5.6); where too few points remain (under 30), " +
                "the edf assumes the noise identified at the largest tau where it could be, or white FM. Gaps: a null reading is a gap; " +
                "a term of ADEV, OADEV, MDEV, TDEV, HDEV or OHDEV whose span contains a gap is left out and the average is over the terms " +
                "used (count says how many); noise identification drops the averages or samples that contain one; TOTDEV refuses data with " +
                "gaps (422), since its reflected extension is not defined across them. A point that cannot be computed at a requested m " +
                "(too few readings) is left out of its list.")
            .Accepts<StabilityRequest>("application/json")
            .ProducesValidationProblem(StatusCodes.Status400BadRequest)
            .ProducesValidationProblem(StatusCodes.Status422UnprocessableEntity)
            .ProducesProblem(StatusCodes.Status413PayloadTooLarge)
            .ProducesProblem(StatusCodes.Status415UnsupportedMediaType);
        return routes;
    }

    /// <summary>POST /api/v1/stability: the body is read as it arrives by <see cref="StabilityBody"/>.</summary>
    public static async Task<Results<Ok<StabilityResponse>, ProblemHttpResult>> Stability(HttpRequest http, IOptions<JsonOptions> json, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(http);
        ArgumentNullException.ThrowIfNull(json);
        if (!http.HasJsonContentType())
        {
            throw new BadHttpRequestException("The request body must be application/json.", StatusCodes.Status415UnsupportedMediaType);
        }

        try
        {
            using var input = await StabilityBody.ReadAsync(http, json.Value.SerializerOptions, ct);
            return Evaluate(input.Request, input.Values, ct);
        }
        catch (JsonException ex)
        {
            throw new BadHttpRequestException("The request body is not valid JSON for this operation.", StatusCodes.Status400BadRequest, ex);
        }
    }

    private static Results<Ok<StabilityResponse>, ProblemHttpResult> Evaluate(StabilityRequest request, ReadOnlyMemory<double>? readings, CancellationToken ct)
    {
        var errors = new FieldErrors();
        StabilityDataType? type = request.DataType switch
        {
            "frequency" => StabilityDataType.Frequency,
            "phase" => StabilityDataType.Phase,
            null => Missing(errors, "dataType", "Required: \"frequency\" or \"phase\"."),
            _ => Missing(errors, "dataType", $"Unknown data type '{request.DataType}': use \"frequency\" or \"phase\"."),
        };
        if (request.Tau0 is null)
        {
            errors.Add("tau0", "Required: the sampling interval in seconds.");
        }

        double? tau0 = errors.Positive(request.Tau0, "tau0");
        if (readings is not { Length: > 0 })
        {
            errors.Add("values", "At least one reading is required.");
        }
        else if (readings.Value.Length > MaxValues)
        {
            errors.Add("values", $"At most {MaxValues} readings.");
        }

        var statistics = new List<StabilityStatistic>();
        if (request.Statistics is null || request.Statistics.Count == 0)
        {
            errors.Add("statistics", $"Name at least one of {string.Join(", ", StatisticNames.Keys)}.");
        }
        else
        {
            for (int i = 0; i < request.Statistics.Count; i++)
            {
                if (request.Statistics[i] is { } name && StatisticNames.TryGetValue(name, out var s))
                {
                    statistics.Add(s);
                }
                else
                {
                    errors.Add($"statistics[{i}]", $"Unknown statistic '{request.Statistics[i]}': use one of {string.Join(", ", StatisticNames.Keys)}.");
                }
            }
        }

        for (int i = 0; i < (request.AveragingFactors?.Count ?? 0); i++)
        {
            if (request.AveragingFactors![i] < 1)
            {
                errors.Add($"averagingFactors[{i}]", "Averaging factors are whole numbers >= 1.");
            }
        }

        if (!errors.IsEmpty || type is null || tau0 is null)
        {
            return Problems.Invalid(errors.ToDictionary());
        }

        try
        {
            var result = StabilityAnalysis.Analyse(readings!.Value, type.Value, tau0.Value, statistics, request.AveragingFactors?.ToArray(), ct);
            return TypedResults.Ok(new StabilityResponse(
                result.Results.ToDictionary(r => r.Key.ToString().ToLowerInvariant(), r => r.Value.Select(p =>
                    new StabilityPointDto(p.AveragingFactor, p.Tau, p.Deviation, p.Count, p.DegreesOfFreedom, [p.Interval.Low, p.Interval.High])).ToArray()),
                result.Noise.Select(n => new NoiseDto(n.AveragingFactor, n.Tau, n.Alpha, n.Type)).ToArray()));
        }
        catch (MetrologyException ex)
        {
            return Problems.FromMetrology(ex);
        }
    }

    private static StabilityDataType? Missing(FieldErrors errors, string field, string message)
    {
        errors.Add(field, message);
        return null;
    }
}
