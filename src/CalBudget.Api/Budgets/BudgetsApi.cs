using System.Security.Cryptography;
using CalBudget.Api.Auth;
using CalBudget.Api.Hosting;
using CalBudget.Core;
using CalBudget.Core.Gum;
using CalBudget.Core.MonteCarlo;
using Microsoft.AspNetCore.Http.HttpResults;
using Microsoft.Extensions.Options;

namespace CalBudget.Api.Budgets;

/// <summary>The budget endpoints under <c>/api/v1/budgets</c>.</summary>
public static class BudgetsApi
{
    /// <summary>Maps the routes.</summary>
    public static IEndpointRouteBuilder MapBudgetsApi(this IEndpointRouteBuilder routes)
    {
        var group = routes.MapGroup("/api/v1/budgets").WithTags("Budgets").RequireAuthorization(Policies.AnyRole);
        group.MapPost("/evaluate", Evaluate)
            .WithName("EvaluateBudget")
            .WithSummary("Evaluate an additive uncertainty budget (GUM), optionally with Monte Carlo (JCGM 101)")
            .WithDescription(
                "Stateless. Combined standard uncertainty with correlation terms (JCGM 100 eq. 13), Welch-Satterthwaite effective " +
                "degrees of freedom (G.2b), coverage factor from Student's t at the coverage probability with nu_eff truncated to the " +
                "next lower integer (G.4.1), expanded uncertainty U = k u_c. With `monteCarlo`: M trials (or the adaptive procedure of " +
                "JCGM 101 7.9 when `trials` is absent), probabilistically symmetric and shortest coverage intervals, and the validation " +
                "of clause 8 with delta from two significant digits of u_c. Correlated inputs are sampled through a Gaussian copula: " +
                "normal vectors with the stated correlation matrix (factored by its eigendecomposition) mapped to each input's distribution " +
                "by F^-1(Phi(z)); exact for normal pairs, close for others. A student-t input's standardUncertainty is its scale s " +
                "(GUM u = s; Monte Carlo samples x + s t_nu). 400 names each bad field; 422 when the budget cannot be computed (a correlation " +
                "matrix that is not positive semidefinite, zero combined uncertainty, nu_eff below 1, more trials than the ceiling).")
            .Accepts<EvaluateRequest>("application/json")
            .ProducesValidationProblem(StatusCodes.Status400BadRequest)
            .ProducesValidationProblem(StatusCodes.Status422UnprocessableEntity)
            .ProducesProblem(StatusCodes.Status401Unauthorized)
            .ProducesProblem(StatusCodes.Status413PayloadTooLarge)
            .ProducesProblem(StatusCodes.Status415UnsupportedMediaType);
        return routes;
    }

    /// <summary>POST /api/v1/budgets/evaluate.</summary>
    public static Results<Ok<EvaluateResponse>, ProblemHttpResult> Evaluate(EvaluateRequest request, IOptions<CalBudgetOptions> options, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(request);
        ArgumentNullException.ThrowIfNull(options);
        var (response, problem) = Compute(request, options.Value.MonteCarloMaxTrials, ct);
        return response is not null ? TypedResults.Ok(response) : problem!;
    }

    /// <summary>
    /// The evaluation behind POST /api/v1/budgets/evaluate, also used for stored budgets: the answer, or the problem. A
    /// Monte Carlo request without a seed gets a random one, returned in the answer. The Monte Carlo run stops at
    /// <paramref name="cancellationToken"/> (a request's time limit) with an <see cref="OperationCanceledException"/>.
    /// </summary>
    public static (EvaluateResponse? Response, ProblemHttpResult? Problem) Compute(EvaluateRequest request, long maxTrials,
        CancellationToken cancellationToken = default)
    {
        ArgumentNullException.ThrowIfNull(request);
        try
        {
            var errors = new FieldErrors();
            var budget = BudgetRequestMapper.TryMap(request, errors);
            if (request.MonteCarlo?.Trials is < 1)
            {
                errors.Add("monteCarlo.trials", "Must be a whole number >= 1, or absent for the adaptive procedure.");
            }

            if (budget is null || !errors.IsEmpty)
            {
                return (null, Problems.Invalid(errors.ToDictionary()));
            }

            var gum = budget.Evaluate();
            MonteCarloResult? mc = null;
            if (request.MonteCarlo is { } settings)
            {
                var mcOptions = new MonteCarloOptions
                {
                    Trials = settings.Trials,
                    Seed = settings.Seed ?? BitConverter.ToUInt64(RandomNumberGenerator.GetBytes(8)),
                    MaxTrials = maxTrials,
                    Cancellation = cancellationToken,
                };
                mc = MonteCarloEngine.Run(budget, mcOptions, gum);
            }

            return (ToResponse(budget, gum, mc), null);
        }
        catch (MetrologyException ex)
        {
            return (null, Problems.FromMetrology(ex));
        }
    }

    private static EvaluateResponse ToResponse(UncertaintyBudget budget, GumResult gum, MonteCarloResult? mc) => new(
        budget.Measurand,
        gum.Estimate,
        gum.CombinedStandardUncertainty,
        NullIfInfinite(gum.EffectiveDegreesOfFreedom),
        gum.CoverageFactor,
        gum.ExpandedUncertainty,
        gum.CoverageProbability,
        gum.Contributions.Select((c, i) => new ContributionResponse(c.Name, c.StandardUncertainty, c.Sensitivity, c.Contribution, c.VarianceShare,
            NullIfInfinite(budget.Contributions[i].DegreesOfFreedom), budget.Contributions[i].Type.ToString())).ToArray(),
        mc is null ? null : new MonteCarloResponse(
            mc.Trials, mc.Estimate, mc.StandardUncertainty,
            [mc.CoverageInterval.Low, mc.CoverageInterval.High],
            [mc.ShortestCoverageInterval.Low, mc.ShortestCoverageInterval.High],
            mc.Validation?.Validated ?? false,
            mc.Validation?.NumericalTolerance ?? 0,
            [mc.Validation?.LowDifference ?? 0, mc.Validation?.HighDifference ?? 0],
            mc.Seed, mc.Adaptive, mc.Stabilized));

    private static double? NullIfInfinite(double nu) => double.IsPositiveInfinity(nu) ? null : nu;
}
