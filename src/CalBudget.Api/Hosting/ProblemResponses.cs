using System.Text.Json;
using CalBudget.Core;
using Microsoft.AspNetCore.Diagnostics;
using Microsoft.AspNetCore.Http.HttpResults;
using Microsoft.AspNetCore.Mvc;

namespace CalBudget.Api.Hosting;

/// <summary>RFC 9457 problem details for every kind of refusal, with <c>errors</c> naming each bad field.</summary>
public static class Problems
{
    /// <summary>400: the request does not satisfy the contract (types, required fields, ranges, names).</summary>
    public static ProblemHttpResult Invalid(IDictionary<string, string[]> errors, string? detail = null) =>
        Fields(StatusCodes.Status400BadRequest, "The request is not valid.", errors, detail);

    /// <summary>422: the request is well formed but the result cannot be computed from it.</summary>
    public static ProblemHttpResult NotComputable(IDictionary<string, string[]> errors, string? detail = null) =>
        Fields(StatusCodes.Status422UnprocessableEntity, "The request cannot be computed.", errors, detail);

    /// <summary>400 or 422 for an input the metrology refused, naming <paramref name="prefix"/> + its parameter.</summary>
    public static ProblemHttpResult FromMetrology(MetrologyException ex, string prefix = "")
    {
        ArgumentNullException.ThrowIfNull(ex);
        var errors = new Dictionary<string, string[]> { [prefix + ex.Parameter] = [ex.Message] };
        return ex.NotComputable ? NotComputable(errors, ex.Message) : Invalid(errors, ex.Message);
    }

    /// <summary>409: the request conflicts with what is on record; <paramref name="field"/> names what conflicts.</summary>
    public static ProblemHttpResult Conflict(string field, string title, string detail) =>
        TypedResults.Problem(new HttpValidationProblemDetails(new Dictionary<string, string[]> { [field] = [detail] })
        {
            Status = StatusCodes.Status409Conflict,
            Title = title,
            Detail = detail,
        });

    /// <summary>A problem with a status and a detail and no field list.</summary>
    public static ProblemHttpResult Status(int status, string title, string? detail = null) =>
        TypedResults.Problem(new ProblemDetails { Status = status, Title = title, Detail = detail });

    private static ProblemHttpResult Fields(int status, string title, IDictionary<string, string[]> errors, string? detail) =>
        TypedResults.Problem(new HttpValidationProblemDetails(errors) { Status = status, Title = title, Detail = detail ?? Summary(errors) });

    private static string Summary(IDictionary<string, string[]> errors) =>
        string.Join(" ", errors.Take(3).Select(e => $"{e.Key}: {string.Join(" ", e.Value)}"));
}

/// <summary>
/// Turns exceptions that mean "bad request" into problem details: malformed or truncated JSON (400, naming the JSON path),
/// a wrong content type (415), a body over the limit (413), other framework refusals with their own status. Anything
/// else is a 500 with no internals in the body.
/// </summary>
public sealed class RequestExceptionHandler(IProblemDetailsService problems, ILogger<RequestExceptionHandler> log) : IExceptionHandler
{
    /// <inheritdoc />
    public async ValueTask<bool> TryHandleAsync(HttpContext httpContext, Exception exception, CancellationToken cancellationToken)
    {
        ArgumentNullException.ThrowIfNull(httpContext);
        ProblemDetails problem;
        switch (exception)
        {
            case RequestBodyTooLargeException tooLarge:
                problem = new ProblemDetails { Status = StatusCodes.Status413PayloadTooLarge, Title = "The request body is too large.", Detail = tooLarge.Message };
                break;
            case BadHttpRequestException bad when bad.InnerException is JsonException json:
                problem = JsonProblem(json);
                break;
            case BadHttpRequestException bad when bad.InnerException is RequestBodyTooLargeException tooLarge:
                problem = new ProblemDetails { Status = StatusCodes.Status413PayloadTooLarge, Title = "The request body is too large.", Detail = tooLarge.Message };
                break;
            case BadHttpRequestException bad:
                problem = new ProblemDetails { Status = bad.StatusCode, Title = TitleFor(bad.StatusCode), Detail = bad.Message };
                break;
            case InvalidOperationException { InnerException: System.Text.DecoderFallbackException }:
                // a string kept as a JsonElement is decoded only when read: bytes that are not UTF-8 show there
                problem = new ProblemDetails { Status = StatusCodes.Status400BadRequest, Title = TitleFor(StatusCodes.Status400BadRequest), Detail = "The request body holds text that is not valid UTF-8." };
                break;
            case OperationCanceledException when httpContext.RequestAborted.IsCancellationRequested:
                return true; // the client went away; nobody is listening for an answer
            default:
                Log.UnhandledError(log, exception, httpContext.Request.Method, httpContext.Request.Path);
                problem = new ProblemDetails { Status = StatusCodes.Status500InternalServerError, Title = "The service failed to handle the request." };
                break;
        }

        httpContext.Response.StatusCode = problem.Status ?? 500;
        return await problems.TryWriteAsync(new ProblemDetailsContext { HttpContext = httpContext, ProblemDetails = problem, Exception = exception });
    }

    private static HttpValidationProblemDetails JsonProblem(JsonException json)
    {
        // System.Text.Json paths look like "$.contributions[0].halfWidth"; the field name drops the "$.".
        string field = string.IsNullOrEmpty(json.Path) || json.Path == "$" ? "body" : json.Path.StartsWith("$.", StringComparison.Ordinal) ? json.Path[2..] : json.Path;
        string where = json.LineNumber is long line ? $" (line {line + 1}, byte {json.BytePositionInLine + 1})" : "";
        string message = Describe(json);
        return new HttpValidationProblemDetails(new Dictionary<string, string[]> { [field] = [message + where] })
        {
            Status = StatusCodes.Status400BadRequest,
            Title = "The request body is not valid JSON for this operation.",
            Detail = $"{field}: {message}{where}",
        };
    }

    // The serializer's own wording names .NET types; say instead what is wrong with the value in the contract's terms.
    private static string Describe(JsonException json)
    {
        string raw = json.Message;
        if (raw.Contains("could not be mapped", StringComparison.Ordinal))
        {
            return "Unknown property: it is not part of the contract (see the OpenAPI document).";
        }

        if (raw.Contains("could not be converted", StringComparison.Ordinal))
        {
            return "This value has the wrong type for the field (numbers must be JSON numbers, names JSON strings).";
        }

        int cut = raw.IndexOf(" LineNumber:", StringComparison.Ordinal);
        return "Malformed JSON: " + (cut > 0 ? raw[..cut] : raw.Split(" Path:", 2)[0]);
    }

    private static string TitleFor(int status) => status switch
    {
        StatusCodes.Status415UnsupportedMediaType => "The request body must be application/json.",
        StatusCodes.Status413PayloadTooLarge => "The request body is too large.",
        _ => "The request is not valid.",
    };
}
