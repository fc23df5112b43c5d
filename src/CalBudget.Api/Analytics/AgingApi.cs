using CalBudget.Api.Auth;
using CalBudget.Api.Hosting;
using CalBudget.Core;
using CalBudget.Core.Aging;
using Microsoft.AspNetCore.Http.HttpResults;

namespace CalBudget.Api.Analytics;

/// <summary>Aging fits under <c>/api/v1/aging</c>.</summary>
public static class AgingApi
{
    /// <summary>Maps the routes.</summary>
    public static IEndpointRouteBuilder MapAgingApi(this IEndpointRouteBuilder routes)
    {
        routes.MapGroup("/api/v1/aging").WithTags("Analytics").RequireAuthorization(Policies.AnyRole)
            .MapPost("/fit", Fit).WithName("FitAging")
            .WithSummary("Fit linear or logarithmic aging to a dated fractional-frequency history, and predict")
            .WithDescription("t is in days from the earliest point. linear: y = offsetAtOrigin + ratePerDay t (least squares, QR). " +
                "logarithmic: y = a ln(bPerDay t + 1) + offsetAtOrigin (MIL-PRF-55310), by MathNet's Levenberg-Marquardt from a profile " +
                "search over b; non-convergence, or a history that cannot tell the log model from a straight line, is 422, never a " +
                "doubtful answer. Weights 1/u^2 when every point has standardUncertainty (covariance taken as known), else equal " +
                "(covariance scaled by the residual variance). predictAt gives the value with its standard uncertainty from the " +
                "covariance, and the uncertainty of a new reading there (adding the residual scatter).")
            .Accepts<AgingRequest>("application/json")
            .ProducesValidationProblem(StatusCodes.Status400BadRequest).ProducesValidationProblem(StatusCodes.Status422UnprocessableEntity);
        return routes;
    }

    /// <summary>POST /api/v1/aging/fit.</summary>
    public static Results<Ok<AgingResponse>, ProblemHttpResult> Fit(AgingRequest request)
    {
        ArgumentNullException.ThrowIfNull(request);
        var errors = new FieldErrors();
        AgingModel? model = request.Model switch
        {
            "linear" => AgingModel.Linear,
            "logarithmic" => AgingModel.Logarithmic,
            _ => null,
        };
        if (model is null)
        {
            errors.Add("model", "Required: \"linear\" or \"logarithmic\".");
        }

        if (request.Points is null || request.Points.Count == 0)
        {
            errors.Add("points", "Required: the dated readings.");
        }
        else if (request.Points.Count > 100_000)
        {
            errors.Add("points", "At most 100000 points.");
        }
        else
        {
            for (int i = 0; i < request.Points.Count; i++)
            {
                var p = request.Points[i];
                if (p?.Time is null)
                {
                    errors.Add($"points[{i}].time", "Required (RFC 3339).");
                }

                if (p?.FractionalOffset is null)
                {
                    errors.Add($"points[{i}].fractionalOffset", "Required.");
                }

                errors.Positive(p?.StandardUncertainty, $"points[{i}].standardUncertainty");
            }
        }

        if (!errors.IsEmpty || model is null)
        {
            return Problems.Invalid(errors.ToDictionary());
        }

        var origin = request.Points!.Min(p => p!.Time!.Value).ToUniversalTime();
        double Days(DateTimeOffset t) => (t - origin).TotalDays;
        var points = request.Points!.Select(p => new AgingPoint(Days(p!.Time!.Value), p.FractionalOffset!.Value, p.StandardUncertainty)).ToArray();
        try
        {
            var fit = AgingFit.Fit(points, model.Value);
            string[] names = model == AgingModel.Linear ? ["offsetAtOrigin", "ratePerDay"] : ["a", "bPerDay", "offsetAtOrigin"];
            var parameters = names.Select((name, i) => (name, i)).ToDictionary(x => x.name, x => fit.Parameters[x.i]);
            int k = names.Length;
            var covariance = Enumerable.Range(0, k).Select(r => Enumerable.Range(0, k).Select(c => fit.Covariance[r, c]).ToArray()).ToArray();
            AgingPredictionDto? prediction = null;
            if (request.PredictAt is { } at)
            {
                var (value, u, uNew) = fit.Predict(Days(at));
                prediction = new AgingPredictionDto(at.ToUniversalTime(), value, u, uNew);
            }

            return TypedResults.Ok(new AgingResponse(request.Model!, origin, parameters, names, covariance, fit.ResidualStandardDeviation, fit.DegreesOfFreedom, prediction));
        }
        catch (MetrologyException ex)
        {
            return Problems.FromMetrology(ex);
        }
    }
}
