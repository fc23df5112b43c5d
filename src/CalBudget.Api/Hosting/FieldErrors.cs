namespace CalBudget.Api.Hosting;

/// <summary>Collects every problem with a request, keyed by the JSON path of the field (for example <c>contributions[2].halfWidth</c>).</summary>
public sealed class FieldErrors
{
    private readonly Dictionary<string, List<string>> _errors = new(StringComparer.Ordinal);

    /// <summary>True when nothing has been added.</summary>
    public bool IsEmpty => _errors.Count == 0;

    /// <summary>How many fields have errors.</summary>
    public int Count => _errors.Count;

    /// <summary>Adds a message for <paramref name="field"/>.</summary>
    public void Add(string field, string message)
    {
        if (!_errors.TryGetValue(field, out var list))
        {
            _errors[field] = list = [];
        }

        list.Add(message);
    }

    /// <summary>A finite number &gt;= 0, or an error.</summary>
    public double? NonNegative(double? value, string field)
    {
        if (value is double v && (!double.IsFinite(v) || v < 0))
        {
            Add(field, "Must be a finite number >= 0.");
            return null;
        }

        return value;
    }

    /// <summary>A finite number &gt; 0, or an error.</summary>
    public double? Positive(double? value, string field)
    {
        if (value is double v && (!double.IsFinite(v) || v <= 0))
        {
            Add(field, "Must be a finite number > 0.");
            return null;
        }

        return value;
    }

    /// <summary>A finite number, or an error.</summary>
    public double? Finite(double? value, string field)
    {
        if (value is double v && !double.IsFinite(v))
        {
            Add(field, "Must be a finite number.");
            return null;
        }

        return value;
    }

    /// <summary>Text of 1 to <paramref name="maxLength"/> characters without control characters, or an error.</summary>
    public string? Text(string? value, string field, int maxLength, bool required = true)
    {
        if (string.IsNullOrWhiteSpace(value))
        {
            if (required)
            {
                Add(field, "Required.");
            }

            return null;
        }

        if (value.Length > maxLength)
        {
            Add(field, $"At most {maxLength} characters.");
            return null;
        }

        if (value.Any(char.IsControl))
        {
            Add(field, "Must not contain control characters.");
            return null;
        }

        return value.Trim();
    }

    /// <summary>The errors in the shape of RFC 9457 validation problems.</summary>
    public IDictionary<string, string[]> ToDictionary() => _errors.ToDictionary(e => e.Key, e => e.Value.ToArray(), StringComparer.Ordinal);
}
