using CalBudget.Api.Auth;
using CalBudget.Api.Hosting;
using CalBudget.Core;
using CalBudget.Core.Orientation;
using CalBudget.Core.Stability;
using CalBudget.Data;
using CalBudget.Data.Calibrations;
using CalBudget.Data.Instruments;
using Microsoft.AspNetCore.Http.HttpResults;

namespace CalBudget.Api.Instruments;

/// <summary>A tip-over test: the runs to fit.</summary>
/// <param name="RunIds">At least four runs of the instrument against one reference, each with readings, in postures that determine all three components.</param>
/// <param name="Notes">Free text.</param>
public sealed record SensitivityTestRequest(IReadOnlyList<long>? RunIds, string? Notes);

/// <summary>One run's part in a test.</summary>
/// <param name="RunId">The run.</param>
/// <param name="Up">Its posture's up vector.</param>
/// <param name="Mean">Its mean fractional frequency.</param>
/// <param name="StandardUncertainty">Its Type A standard uncertainty (the fit's weight is 1/u^2).</param>
public sealed record SensitivityRunDto(long RunId, double[] Up, double Mean, double StandardUncertainty);

/// <summary>A stored tip-over test.</summary>
/// <param name="Id">Its id.</param>
/// <param name="InstrumentId">The instrument.</param>
/// <param name="Gamma">Gamma per g in the body frame.</param>
/// <param name="Magnitude">|Gamma|.</param>
/// <param name="OffsetAtRest">The fitted offset without acceleration.</param>
/// <param name="Covariance">Covariance of Gamma, (X^T W X)^-1 with the runs' Type A uncertainties as known.</param>
/// <param name="DegreesOfFreedom">n - 4.</param>
/// <param name="RunIds">The runs fitted.</param>
/// <param name="Notes">Notes.</param>
/// <param name="TestedAt">When.</param>
/// <param name="TestedBy">By whom.</param>
public sealed record SensitivityTestDto(long Id, long InstrumentId, double[] Gamma, double Magnitude, double OffsetAtRest, double[][]? Covariance, int DegreesOfFreedom,
    long[] RunIds, string Notes, DateTimeOffset TestedAt, string TestedBy);

/// <summary>Tip-over tests under <c>/api/v1/instruments/{id}/sensitivity-tests</c>.</summary>
public static class SensitivityTestsApi
{
    /// <summary>Maps the routes.</summary>
    public static IEndpointRouteBuilder MapSensitivityTestsApi(this IEndpointRouteBuilder routes)
    {
        routes.MapGroup("/api/v1/instruments/{id:long}/sensitivity-tests").WithTags("Instruments").RequireAuthorization(Policies.AnyRole)
            .MapGet("/", List).WithName("ListSensitivityTests").WithSummary("The instrument's tip-over tests, oldest first; budgets use the newest")
            .ProducesProblem(StatusCodes.Status404NotFound);
        routes.MapGroup("/api/v1/instruments/{id:long}/sensitivity-tests").WithTags("Instruments").RequireAuthorization(Policies.Writer)
            .MapPost("/", Create).WithName("CreateSensitivityTest")
            .WithSummary("Fit the acceleration-sensitivity vector from runs in several postures and keep it on the instrument")
            .WithDescription("Each run gives its mean fractional frequency and Type A uncertainty (the stability-based estimator); the fit is weighted least squares of y = y0 + Gamma . up (see POST /api/v1/orientation/sensitivity). 422 names the run or field that prevents it: fewer than four runs, a run of another instrument or reference, a run without readings, postures that do not determine all three components.")
            .Accepts<SensitivityTestRequest>("application/json")
            .Produces<SensitivityTestDto>(StatusCodes.Status201Created)
            .ProducesValidationProblem(StatusCodes.Status400BadRequest).ProducesProblem(StatusCodes.Status404NotFound)
            .ProducesValidationProblem(StatusCodes.Status422UnprocessableEntity);
        return routes;
    }

    /// <summary>GET /api/v1/instruments/{id}/sensitivity-tests.</summary>
    public static async Task<Results<Ok<SensitivityTestDto[]>, ProblemHttpResult>> List(long id, InstrumentStore instruments, SensitivityTestStore tests, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(instruments);
        ArgumentNullException.ThrowIfNull(tests);
        if (await instruments.GetAsync(id, ct) is null)
        {
            return Problems.Status(StatusCodes.Status404NotFound, "No such instrument.", $"No instrument has the id {id}.");
        }

        return TypedResults.Ok((await tests.ListAsync(id, ct)).Select(ToDto).ToArray());
    }

    /// <summary>POST /api/v1/instruments/{id}/sensitivity-tests.</summary>
    public static async Task<IResult> Create(long id, SensitivityTestRequest request, HttpContext http, IDbConnectionFactory database, ReadingStore readings,
        TimeProvider time, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(request);
        ArgumentNullException.ThrowIfNull(http);
        ArgumentNullException.ThrowIfNull(readings);
        ArgumentNullException.ThrowIfNull(time);
        var errors = new FieldErrors();
        string notes = errors.Text(request.Notes, "notes", 2000, required: false) ?? "";
        var runIds = request.RunIds ?? [];
        if (runIds.Count < 4)
        {
            errors.Add("runIds", "At least four runs, in postures that determine all three components of Gamma.");
        }
        else if (runIds.Distinct().Count() != runIds.Count)
        {
            errors.Add("runIds", "Each run once.");
        }

        if (!errors.IsEmpty)
        {
            return Problems.Invalid(errors.ToDictionary());
        }

        var now = time.GetUtcNow();
        await using var work = await UnitOfWork.BeginAsync(database, ct);
        if (await InstrumentStore.GetAsync(work, id) is not { } instrument)
        {
            return Problems.Status(StatusCodes.Status404NotFound, "No such instrument.", $"No instrument has the id {id}.");
        }

        var observations = new List<PostureReading>();
        long? reference = null;
        for (int i = 0; i < runIds.Count; i++)
        {
            string at = $"runIds[{i}]";
            var run = await CalibrationRunStore.GetAsync(work, runIds[i]);
            string? refusal = run is null ? $"No calibration run has the id {runIds[i]}."
                : run.Fields.InstrumentId != id ? $"Run {runIds[i]} is of another instrument."
                : run.RetiredAt is not null ? $"Run {runIds[i]} is retired."
                : reference is long r && run.Fields.ReferenceId != r ? $"Run {runIds[i]} used another reference standard; a test compares against one."
                : run.Readings is null ? $"Run {runIds[i]} has no readings."
                : null;
            if (refusal is not null)
            {
                return Problems.NotComputable(new Dictionary<string, string[]> { [at] = [refusal] });
            }

            reference = run!.Fields.ReferenceId;
            var values = await readings.FractionalOffsetsAsync(run.Readings!.UploadId, ct);

            try
            {
                var typeA = TimebaseTypeA.Evaluate(values, run.Fields.GateTimeSeconds);
                observations.Add(new PostureReading(Posture.FromVector(new Vector3D(run.Fields.UpX, run.Fields.UpY, run.Fields.UpZ)), typeA.Mean,
                    typeA.StandardUncertainty > 0 ? typeA.StandardUncertainty : null));
            }
            catch (MetrologyException ex)
            {
                return Problems.NotComputable(new Dictionary<string, string[]> { [at] = [ex.Message] });
            }
        }

        SensitivityFit fit;
        try
        {
            fit = AccelerationSensitivity.Fit(observations);
        }
        catch (MetrologyException ex)
        {
            return Problems.NotComputable(new Dictionary<string, string[]> { ["runIds"] = [ex.Message] });
        }

        // the covariance budgets rely on: run-to-run scatter (re-seating, retrace) is judged from the residuals, so the
        // within-run Type A weights are scaled by the Birge ratio squared when chi^2 / nu > 1; none with four runs (nu = 0)
        double[][]? covariance = fit.ScaledCovariance is { } c ? Enumerable.Range(0, 3).Select(i => Enumerable.Range(0, 3).Select(j => c[i, j]).ToArray()).ToArray() : null;
        var test = await SensitivityTestStore.CreateAsync(work, instrument.Id, fit.Gamma.ToArray(), fit.OffsetAtRest, covariance, fit.DegreesOfFreedom,
            runIds.ToArray(), notes, Conventions.Actor(http.User), now);
        var dto = ToDto(test);
        await AuditTrail.RecordAsync(work, http, now, "create", "sensitivity-test", test.Id, null, dto);
        await work.CommitAsync(ct);
        return TypedResults.Created($"/api/v1/instruments/{id}/sensitivity-tests", dto);
    }

    private static SensitivityTestDto ToDto(SensitivityTest t) => new(t.Id, t.InstrumentId, t.Gamma, Math.Sqrt(t.Gamma.Sum(g => g * g)), t.OffsetAtRest,
        t.Covariance, t.DegreesOfFreedom, t.RunIds, t.Notes, t.TestedAt, t.TestedBy);
}
