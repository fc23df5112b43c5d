using System.Text.Json;
using CalBudget.Api.Auth;
using CalBudget.Api.Hosting;
using CalBudget.Data.Audit;
using Microsoft.AspNetCore.Http.HttpResults;

namespace CalBudget.Api.Audit;

/// <summary>An audit entry as the API shows it.</summary>
/// <param name="Seq">Its position in the trail.</param>
/// <param name="At">When.</param>
/// <param name="Actor">Who.</param>
/// <param name="Action">What.</param>
/// <param name="EntityType">Which kind of entity.</param>
/// <param name="EntityId">Which one.</param>
/// <param name="Reason">Why, where the action takes a reason.</param>
/// <param name="State">The entity's new state.</param>
/// <param name="StateSha256">SHA-256 of the state as stored (UTF-8 JSON text).</param>
/// <param name="PreviousSha256">The previous entry's hash.</param>
/// <param name="EntrySha256">This entry's hash: SHA-256 of "previous|seq|at|actor|action|entityType|entityId|reason|stateSha256".</param>
public sealed record AuditEntryDto(long Seq, DateTimeOffset At, string Actor, string Action, string EntityType, string EntityId, string? Reason,
    JsonElement State, string StateSha256, string PreviousSha256, string EntrySha256);

/// <summary>The result of a verification.</summary>
/// <param name="Entries">Entries checked.</param>
/// <param name="Intact">True when every state hash and every link matches.</param>
/// <param name="FirstBadSeq">The first entry that does not match, or null.</param>
/// <param name="Problem">What does not match there.</param>
public sealed record AuditVerificationDto(long Entries, bool Intact, long? FirstBadSeq, string? Problem);

/// <summary>The audit trail under <c>/api/v1/audit</c>, for auditors and administrators.</summary>
public static class AuditApi
{
    /// <summary>Maps the routes.</summary>
    public static IEndpointRouteBuilder MapAuditApi(this IEndpointRouteBuilder routes)
    {
        var group = routes.MapGroup("/api/v1/audit").WithTags("Audit").RequireAuthorization(Policies.AuditReader);
        group.MapGet("/", List).WithName("ListAudit").WithSummary("The audit trail in order, a page at a time")
            .WithDescription("Every write in the service appends an entry in the write's own transaction: time, actor, action, entity, reason and the entity's new state with its SHA-256, chained to the previous entry's hash. Filters: entityType, entityId, actor, from and to (RFC 3339, to exclusive). limit 1 to 200 (default 50); nextCursor is passed back as cursor.")
            .ProducesValidationProblem(StatusCodes.Status400BadRequest);
        group.MapGet("/verify", Verify).WithName("VerifyAudit").WithSummary("Recompute every state hash and the chain; name the first entry that does not match");
        return routes;
    }

    /// <summary>GET /api/v1/audit.</summary>
    public static async Task<Results<Ok<Page<AuditEntryDto>>, ProblemHttpResult>> List(AuditLog log, int? limit, string? cursor, string? entityType,
        string? entityId, string? actor, DateTimeOffset? from, DateTimeOffset? to, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(log);
        var errors = new FieldErrors();
        var (take, after) = Conventions.PageRequest(limit, cursor, errors);
        if (from is { } f && to is { } t && t <= f)
        {
            errors.Add("to", "Comes after from.");
        }

        if (!errors.IsEmpty)
        {
            return Problems.Invalid(errors.ToDictionary());
        }

        var rows = await log.ListAsync(after, take + 1, Blank(entityType), Blank(entityId), Blank(actor), from, to, ct);
        return TypedResults.Ok(Conventions.Page(rows, take, e => new AuditEntryDto(e.Seq, e.At, e.Actor, e.Action, e.EntityType, e.EntityId, e.Reason,
            JsonDocument.Parse(e.State).RootElement.Clone(), e.StateSha256, e.PreviousSha256, e.EntrySha256), e => e.Seq));
    }

    /// <summary>GET /api/v1/audit/verify.</summary>
    public static async Task<Ok<AuditVerificationDto>> Verify(AuditLog log, CancellationToken ct)
    {
        ArgumentNullException.ThrowIfNull(log);
        var v = await log.VerifyAsync(ct);
        return TypedResults.Ok(new AuditVerificationDto(v.Entries, v.Intact, v.FirstBadSeq, v.Problem));
    }

    private static string? Blank(string? text) => string.IsNullOrWhiteSpace(text) ? null : text.Trim();
}
