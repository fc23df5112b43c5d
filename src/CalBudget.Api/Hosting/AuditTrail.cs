using System.Text.Json;
using CalBudget.Data;
using CalBudget.Data.Audit;
using Microsoft.AspNetCore.Http.Json;
using Microsoft.Extensions.Options;

namespace CalBudget.Api.Hosting;

/// <summary>The audit entry of a write, made in the write's own unit of work with the entity's new state as the API shows it.</summary>
public static class AuditTrail
{
    /// <summary>Appends the entry: who (the caller), what, which entity, why, and its new state.</summary>
    public static Task RecordAsync<T>(UnitOfWork work, HttpContext http, DateTimeOffset now, string action, string entityType, object entityId,
        string? reason, T state)
    {
        ArgumentNullException.ThrowIfNull(http);
        ArgumentNullException.ThrowIfNull(entityId);
        var options = http.RequestServices.GetRequiredService<IOptions<JsonOptions>>().Value.SerializerOptions;
        return AuditLog.AppendAsync(work, now, Conventions.Actor(http.User), action, entityType,
            Convert.ToString(entityId, System.Globalization.CultureInfo.InvariantCulture)!, reason, JsonSerializer.Serialize(state, options));
    }
}
