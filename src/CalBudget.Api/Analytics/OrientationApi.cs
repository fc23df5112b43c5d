using System.Text.Json;
using CalBudget.Api.Auth;
using CalBudget.Api.Hosting;
using CalBudget.Core;
using CalBudget.Core.Orientation;
using Microsoft.AspNetCore.Http.HttpResults;

namespace CalBudget.Api.Analytics;

/// <summary>Acceleration sensitivity and orientation shifts under <c>/api/v1/orientation</c>.</summary>
public static class OrientationApi
{
    private const string Frame = "Body frame: +x to the right seen from the front panel, +y toward the rear, +z up through the top cover; " +
        "a posture is its up vector (opposite gravity), a named axis \"+x\" ... \"-z\" or a vector [x, y, z] that the service normalises " +
        "(zero length is an error); at rest the instrument feels A = +1 g along up.";

    /// <summary>Maps the routes.</summary>
    public static IEndpointRouteBuilder MapOrientationApi(this IEndpointRouteBuilder routes)
    {
        var group = routes.MapGroup("/api/v1/orientation").WithTags("Analytics").RequireAuthorization(Policies.AnyRole);
        group.MapPost("/sensitivity", Sensitivity).WithName("FitAccelerationSensitivity")
            .WithSummary("Fit the acceleration-sensitivity vector Gamma from readings in several postures")
            .WithDescription("Least squares of y_k = offsetAtRest + Gamma . up_k. " + Frame + " Weights 1/u^2 when every observation has " +
                "standardUncertainty (covariance (X^T W X)^-1, taken as known), else equal (covariance s^2 (X^T X)^-1 with s^2 the residual " +
                "variance on n - 4 degrees of freedom; null for exactly four postures). Fewer than four observations, or up vectors in one " +
                "plane (which leave a component of Gamma undetermined): 422.")
            .Accepts<SensitivityRequest>("application/json")
            .ProducesValidationProblem(StatusCodes.Status400BadRequest).ProducesValidationProblem(StatusCodes.Status422UnprocessableEntity);
        group.MapPost("/shift", Shift).WithName("OrientationShift")
            .WithSummary("Frequency shift between the calibration posture and a posture (or range of postures) of use")
            .WithDescription("Give exactly one of useUp (a known posture: shift = Gamma . (useUp - calibrationUp), standardUncertainty " +
                "from gammaCovariance), tiltLimitDegrees (every posture within that angle of the calibration posture) or anyOrientation " +
                "(180 degrees); for a range, halfWidth is the largest |dy| over it, computed exactly (not by sampling). " + Frame)
            .Accepts<ShiftRequest>("application/json")
            .ProducesValidationProblem(StatusCodes.Status400BadRequest).ProducesValidationProblem(StatusCodes.Status422UnprocessableEntity);
        return routes;
    }

    /// <summary>POST /api/v1/orientation/sensitivity.</summary>
    public static Results<Ok<SensitivityResponse>, ProblemHttpResult> Sensitivity(SensitivityRequest request)
    {
        ArgumentNullException.ThrowIfNull(request);
        var errors = new FieldErrors();
        var readings = new List<PostureReading>();
        if (request.Observations is null || request.Observations.Count == 0)
        {
            errors.Add("observations", "At least four observations are required.");
        }
        else if (request.Observations.Count > 10_000)
        {
            errors.Add("observations", "At most 10000 observations.");
        }
        else
        {
            for (int i = 0; i < request.Observations.Count; i++)
            {
                var o = request.Observations[i];
                string at = $"observations[{i}]";
                var posture = ReadPosture(o?.Up, $"{at}.up", errors);
                if (o?.FractionalOffset is null)
                {
                    errors.Add($"{at}.fractionalOffset", "Required.");
                }

                double? u = errors.Positive(o?.StandardUncertainty, $"{at}.standardUncertainty");
                if (posture is { } p && o?.FractionalOffset is double y && (o.StandardUncertainty is null || u is not null))
                {
                    readings.Add(new PostureReading(p, y, u));
                }
            }
        }

        if (!errors.IsEmpty)
        {
            return Problems.Invalid(errors.ToDictionary());
        }

        try
        {
            var fit = AccelerationSensitivity.Fit(readings);
            static double[][]? Rows(double[,]? c) => c is null ? null : Enumerable.Range(0, 3).Select(i => Enumerable.Range(0, 3).Select(j => c[i, j]).ToArray()).ToArray();
            return TypedResults.Ok(new SensitivityResponse(fit.Gamma.ToArray(), fit.Magnitude, fit.OffsetAtRest, fit.StandardUncertainty, Rows(fit.Covariance), fit.DegreesOfFreedom,
                fit.ReducedChiSquared, Rows(fit.ScaledCovariance)));
        }
        catch (MetrologyException ex)
        {
            return Problems.FromMetrology(ex);
        }
    }

    /// <summary>POST /api/v1/orientation/shift.</summary>
    public static Results<Ok<ShiftResponse>, ProblemHttpResult> Shift(ShiftRequest request)
    {
        ArgumentNullException.ThrowIfNull(request);
        var errors = new FieldErrors();
        Vector3D? gamma = null;
        if (request.Gamma is not { Length: 3 } g || g.Any(v => !double.IsFinite(v)))
        {
            errors.Add("gamma", "Required: three finite components [Gx, Gy, Gz] per g.");
        }
        else
        {
            gamma = new Vector3D(g[0], g[1], g[2]);
        }

        var calibration = ReadPosture(request.CalibrationUp, "calibrationUp", errors);
        int ranges = (request.UseUp is { ValueKind: not JsonValueKind.Null } ? 1 : 0) + (request.TiltLimitDegrees is not null ? 1 : 0) + (request.AnyOrientation == true ? 1 : 0);
        if (ranges != 1)
        {
            errors.Add("useUp", ranges == 0
                ? "Give one of useUp, tiltLimitDegrees or anyOrientation."
                : "Give only one of useUp, tiltLimitDegrees or anyOrientation: they are different postures of use.");
        }

        Posture? use = request.UseUp is { ValueKind: not JsonValueKind.Null } ? ReadPosture(request.UseUp, "useUp", errors) : null;
        if (request.TiltLimitDegrees is double tilt && (!double.IsFinite(tilt) || tilt < 0 || tilt > 180))
        {
            errors.Add("tiltLimitDegrees", "A tilt limit lies between 0 and 180 degrees.");
        }

        double[,]? covariance = null;
        if (request.GammaCovariance is { } rows)
        {
            if (rows.Length != 3 || rows.Any(r => r is not { Length: 3 } || r.Any(v => !double.IsFinite(v))))
            {
                errors.Add("gammaCovariance", "A 3 x 3 matrix of finite numbers.");
            }
            else
            {
                covariance = new double[3, 3];
                for (int i = 0; i < 3; i++)
                {
                    for (int j = 0; j < 3; j++)
                    {
                        covariance[i, j] = rows[i][j];
                    }
                }
            }
        }

        if (!errors.IsEmpty || gamma is null || calibration is null)
        {
            return Problems.Invalid(errors.ToDictionary());
        }

        try
        {
            var r = use is { } u
                ? OrientationShift.Known(gamma.Value, calibration.Value, u, covariance)
                : OrientationShift.WithinTilt(gamma.Value, calibration.Value, request.TiltLimitDegrees ?? 180, covariance);
            return TypedResults.Ok(new ShiftResponse(r.Shift, r.StandardUncertainty, r.HalfWidth, r.WorstPosture.Up.ToArray()));
        }
        catch (MetrologyException ex)
        {
            return Problems.FromMetrology(ex);
        }
    }

    /// <summary>A posture from JSON: a named axis or a vector of three numbers; errors go under <paramref name="field"/>.</summary>
    public static Posture? ReadPosture(JsonElement? element, string field, FieldErrors errors)
    {
        try
        {
            switch (element)
            {
                case { ValueKind: JsonValueKind.String } s:
                    return Posture.FromAxis(s.GetString()!);
                case { ValueKind: JsonValueKind.Array } a when a.GetArrayLength() == 3 && a.EnumerateArray().All(e => e.ValueKind == JsonValueKind.Number):
                    var v = a.EnumerateArray().Select(e => e.GetDouble()).ToArray();
                    return Posture.FromVector(new Vector3D(v[0], v[1], v[2]));
                case null or { ValueKind: JsonValueKind.Null or JsonValueKind.Undefined }:
                    errors.Add(field, "Required: a named axis (\"+x\" ... \"-z\") or a vector [x, y, z].");
                    return null;
                default:
                    errors.Add(field, "A named axis (\"+x\" ... \"-z\") or a vector of three numbers [x, y, z].");
                    return null;
            }
        }
        catch (MetrologyException ex)
        {
            errors.Add(field, ex.Message);
            return null;
        }
        catch (InvalidOperationException ex) when (ex.InnerException is System.Text.DecoderFallbackException)
        {
            // a JsonElement keeps a string's bytes as sent; reading them is where bytes that are not UTF-8 show
            errors.Add(field, "Not valid UTF-8 text.");
            return null;
        }
    }
}
