using System.Security.Claims;
using System.Security.Cryptography;
using System.Text;
using System.Text.Json;
using Microsoft.AspNetCore.Http.Json;
using Microsoft.Extensions.Options;

namespace CalBudget.Api.Hosting;

/// <summary>
/// The LIMS conventions of the HTTP contract, in one place: ETags from versions, If-Match, opaque cursors and the
/// hash that recognises an Idempotency-Key replay.
/// </summary>
public static class Conventions
{
    /// <summary>The header that makes a creating POST replayable.</summary>
    public const string IdempotencyKeyHeader = "Idempotency-Key";

    /// <summary>The strong ETag of a version: "7".</summary>
    public static string ETag(long version) => "\"" + version.ToString(System.Globalization.CultureInfo.InvariantCulture) + "\"";

    /// <summary>The If-Match of a request: absent, "*" (any), a version, or unreadable (null version, present).</summary>
    public static (bool Present, bool Any, long? Version) IfMatch(HttpRequest request)
    {
        ArgumentNullException.ThrowIfNull(request);
        string? raw = request.Headers.IfMatch;
        if (string.IsNullOrWhiteSpace(raw))
        {
            return (false, false, null);
        }

        raw = raw.Trim();
        if (raw == "*")
        {
            return (true, true, null);
        }

        if (raw.StartsWith("W/", StringComparison.Ordinal))
        {
            raw = raw[2..];
        }

        return long.TryParse(raw.Trim('"'), System.Globalization.NumberStyles.None, System.Globalization.CultureInfo.InvariantCulture, out long v)
            ? (true, false, v)
            : (true, false, null);
    }

    /// <summary>The check every update makes: 428 without If-Match, 412 when it names another version. Null when it matches.</summary>
    public static Microsoft.AspNetCore.Http.HttpResults.ProblemHttpResult? CheckIfMatch(HttpRequest request, long currentVersion)
    {
        var (present, any, version) = IfMatch(request);
        if (!present)
        {
            return Problems.Status(StatusCodes.Status428PreconditionRequired, "If-Match is required.",
                "Send the ETag you read as If-Match, so that an update cannot overwrite a change you have not seen.");
        }

        return any || version == currentVersion
            ? null
            : Problems.Status(StatusCodes.Status412PreconditionFailed, "The record has changed since you read it.",
                $"If-Match names version {version?.ToString(System.Globalization.CultureInfo.InvariantCulture) ?? "(unreadable)"}; the current version is {currentVersion}. Read it again and reapply your change.");
    }

    /// <summary>The paging parameters of a list request: how many (1 to 200, default 50) and after which id; errors name limit or cursor.</summary>
    public static (int Take, long After) PageRequest(int? limit, string? cursor, FieldErrors errors)
    {
        ArgumentNullException.ThrowIfNull(errors);
        if (limit is < 1 or > 200)
        {
            errors.Add("limit", "Between 1 and 200.");
        }

        long? after = AfterId(cursor);
        if (after is null)
        {
            errors.Add("cursor", "Not a cursor this service issued.");
        }

        return (limit ?? 50, after ?? 0);
    }

    /// <summary>A page from up to take + 1 rows read: the first take, and a cursor when there were more.</summary>
    public static Page<TDto> Page<TRow, TDto>(IReadOnlyList<TRow> rows, int take, Func<TRow, TDto> map, Func<TRow, long> id)
    {
        ArgumentNullException.ThrowIfNull(rows);
        ArgumentNullException.ThrowIfNull(map);
        ArgumentNullException.ThrowIfNull(id);
        var kept = rows.Take(take).ToArray();
        return new Page<TDto>(kept.Select(map).ToArray(), rows.Count > take ? Cursor(id(kept[^1])) : null);
    }

    /// <summary>An opaque cursor for "after this id".</summary>
    public static string Cursor(long afterId) =>
        Convert.ToBase64String(Encoding.UTF8.GetBytes("after:" + afterId.ToString(System.Globalization.CultureInfo.InvariantCulture))).TrimEnd('=').Replace('+', '-').Replace('/', '_');

    /// <summary>The id a cursor stands for: 0 for none, null when it is not one of ours.</summary>
    public static long? AfterId(string? cursor)
    {
        if (string.IsNullOrEmpty(cursor))
        {
            return 0;
        }

        try
        {
            string padded = cursor.Replace('-', '+').Replace('_', '/');
            padded += new string('=', (4 - padded.Length % 4) % 4);
            string text = Encoding.UTF8.GetString(Convert.FromBase64String(padded));
            return text.StartsWith("after:", StringComparison.Ordinal) && long.TryParse(text[6..], System.Globalization.NumberStyles.None, System.Globalization.CultureInfo.InvariantCulture, out long id) && id >= 0
                ? id
                : null;
        }
        catch (FormatException)
        {
            return null;
        }
    }

    /// <summary>SHA-256 of the request as bound, serialised with the service's JSON settings (formatting does not matter, content does).</summary>
    public static byte[] RequestHash<T>(T request, IOptions<JsonOptions> json)
    {
        ArgumentNullException.ThrowIfNull(json);
        return SHA256.HashData(JsonSerializer.SerializeToUtf8Bytes(request, json.Value.SerializerOptions));
    }

    /// <summary>The claim naming the person behind a key.</summary>
    public const string HolderClaim = "holder";

    /// <summary>On an API key's principal: "false" when the key has no named holder.</summary>
    public const string HolderNamedClaim = "holder-named";

    /// <summary>
    /// Whether the caller is a person one can name: a signed-in user, or a key with a named holder. A key without one
    /// cannot approve anything, since the two-person rule compares people.
    /// </summary>
    public static bool IsNamedPerson(ClaimsPrincipal user)
    {
        ArgumentNullException.ThrowIfNull(user);
        return user.FindFirst(HolderNamedClaim)?.Value != "false";
    }

    /// <summary>The 403 for an approval by a key without a named holder.</summary>
    public static Microsoft.AspNetCore.Http.HttpResults.ProblemHttpResult Unnamed(ClaimsPrincipal user) =>
        Problems.Status(StatusCodes.Status403Forbidden, "A key without a named holder cannot approve.",
            $"The key '{Actor(user)}' names no person; the two-person rule compares people. Use a key created with a holder (keys create --holder) or sign in.");

    /// <summary>The person asking: the key's holder (one person may hold several keys), else its name.</summary>
    public static string Person(ClaimsPrincipal user)
    {
        ArgumentNullException.ThrowIfNull(user);
        return user.FindFirst(HolderClaim)?.Value ?? Actor(user);
    }

    /// <summary>Who is asking: the key's (or user's) name.</summary>
    public static string Actor(ClaimsPrincipal user)
    {
        ArgumentNullException.ThrowIfNull(user);
        return user.Identity?.Name ?? "unknown";
    }
}
