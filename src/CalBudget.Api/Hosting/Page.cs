namespace CalBudget.Api.Hosting;

/// <summary>One page of a list.</summary>
/// <typeparam name="T">The item type.</typeparam>
/// <param name="Items">The items, in a stable order.</param>
/// <param name="NextCursor">Pass as ?cursor= for the next page; null on the last.</param>
public sealed record Page<T>(IReadOnlyList<T> Items, string? NextCursor);

/// <summary>Route metadata shared by the record resources.</summary>
public static class RecordRoutes
{
    /// <summary>The answers a change of a stored record can get besides success: 400, 404, 409 (conflict or retired), 412 and 428.</summary>
    public static RouteHandlerBuilder ProducesChangeRefusals(this RouteHandlerBuilder builder) => builder
        .ProducesValidationProblem(StatusCodes.Status400BadRequest).ProducesProblem(StatusCodes.Status404NotFound)
        .ProducesProblem(StatusCodes.Status409Conflict).ProducesProblem(StatusCodes.Status412PreconditionFailed)
        .ProducesProblem(StatusCodes.Status428PreconditionRequired);
}
